/**
 * The reference as served: the OpenAPI document as JSON text and the page, each built once per
 * kind of server (with or without the development routes) on first use and kept in memory. The
 * operations never change while the process runs.
 */
import { buildApiDocument, type ApiDocument } from './document';
import { renderApiPage } from './page';

export type ApiReference = { document: ApiDocument; json: string; html: string };

const built = new Map<boolean, ApiReference>();

export function apiReference(opts: { devTools: boolean }): ApiReference {
  let ref = built.get(opts.devTools);
  if (!ref) {
    const document = buildApiDocument(opts);
    ref = { document, json: JSON.stringify(document), html: renderApiPage(document) };
    built.set(opts.devTools, ref);
  }
  return ref;
}

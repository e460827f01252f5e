import type { FigureDetail } from '@/shared/schemas/figure-views';
import type { FigureSpecInput } from '@/shared/schemas/figures';
import type request from 'supertest';
import type { Response } from 'supertest';
import type { Person } from './factories';

/**
 * Figure fixtures: a one-column publication spec with TeX axis titles over the given layers
 * (`over` replaces fields), and a figure made through the API.
 */
export function figureSpec(layers: FigureSpecInput['layers'], over: Partial<FigureSpecInput> = {}): FigureSpecInput {
  return {
    title: 'Dijet V′ limits, one column',
    theme: 'publication',
    size: { preset: 'one-column' },
    x: { scale: 'linear', label: "$m_{V'}$ [TeV]" },
    y: { scale: 'log', label: '$\\sigma \\times B$ [fb]' },
    layers,
    ...over,
  };
}

/** Creates a figure (version 1) through the API as `person`. */
export async function makeFigure(person: Person, groupId: string, spec: FigureSpecInput, isPublic = false): Promise<FigureDetail> {
  const res = await person.agent.post(`/api/groups/${groupId}/figures`).send({ spec, public: isPublic });
  if (res.status !== 201) throw new Error(`figure creation failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as FigureDetail;
}

/** Supertest gives text bodies as text; binary ones need a buffer parser. */
export function binary(res: Response & { body: unknown }): Buffer {
  return Buffer.isBuffer(res.body) ? res.body : Buffer.from(res.text ?? '', 'utf8');
}

/** The request with its body collected as bytes, whatever the content type. */
export const buffer = (req: request.Test) =>
  req.buffer(true).parse((res, cb) => {
    const chunks: Buffer[] = [];
    res.on('data', (c: Buffer) => chunks.push(c));
    res.on('end', () => cb(null, Buffer.concat(chunks)));
  });

/** An SVG answer with its text (supertest does not read image/svg+xml as text by itself). */
export async function svgGet(req: request.Test): Promise<Response & { svg: string }> {
  const res = await buffer(req);
  return Object.assign(res, { svg: binary(res).toString('utf8') });
}

/**
 * The API reference as a web page, drawn on the server from the OpenAPI document (document.ts):
 * plain HTML and one style sheet in the page, no script (the content security policy allows
 * inline styles, never inline scripts), every text of the document escaped.
 */
import { colors, fonts, radii, space } from '../../themes/tokens';
import { escapeHtml } from '../lib/html';
import type { AccessInfo, ApiDocument } from './document';

/** The parts of a JSON schema (2020-12, as OpenAPI 3.1 has it) the page shows. */
type Schema = {
  $ref?: string;
  type?: string | string[];
  format?: string;
  description?: string;
  properties?: Record<string, Schema>;
  required?: string[];
  additionalProperties?: boolean | Schema;
  items?: Schema;
  enum?: unknown[];
  const?: unknown;
  anyOf?: Schema[];
  oneOf?: Schema[];
  allOf?: Schema[];
  default?: unknown;
  minimum?: number;
  maximum?: number;
  exclusiveMinimum?: number;
  exclusiveMaximum?: number;
  minLength?: number;
  maxLength?: number;
  minItems?: number;
  maxItems?: number;
  pattern?: string;
};
type Parameter = { name: string; in: string; required?: boolean; description?: string; schema?: Schema };
type Media = { schema?: Schema; encoding?: Record<string, { contentType?: string }> };
type Operation = {
  tags?: string[];
  summary?: string;
  description?: string;
  operationId?: string;
  parameters?: Parameter[];
  requestBody?: { required?: boolean; description?: string; content?: Record<string, Media> };
  responses?: Record<string, { description?: string; content?: Record<string, Media>; headers?: Record<string, { description?: string }> }>;
  'x-access'?: AccessInfo;
  'x-dev-only'?: boolean;
};

const METHODS = ['get', 'post', 'put', 'patch', 'delete'] as const;
const MAX_DEPTH = 5;

/** Escaped text with `code` spans (the document's descriptions use backticks). */
function prose(text: string | undefined): string {
  if (!text) return '';
  return escapeHtml(text).replace(/`([^`]+)`/g, '<code>$1</code>');
}

const json = (v: unknown) => JSON.stringify(v);

function resolver(doc: ApiDocument) {
  const schemas = (doc.components?.schemas ?? {}) as Record<string, Schema>;
  return (s: Schema | undefined): Schema | undefined => {
    let out = s;
    for (let i = 0; out?.$ref && i < 10; i++) out = schemas[out.$ref.replace('#/components/schemas/', '')];
    return out;
  };
}
type Resolve = ReturnType<typeof resolver>;

function typeLabel(s: Schema | undefined, resolve: Resolve): string {
  const r = resolve(s);
  if (!r) return 'any';
  if (r.const !== undefined) return json(r.const);
  if (r.enum) return r.enum.map(json).join(' | ');
  const alternatives = r.anyOf ?? r.oneOf;
  if (alternatives) return alternatives.map((a) => typeLabel(a, resolve)).join(' or ');
  const types = Array.isArray(r.type) ? r.type : r.type ? [r.type] : [];
  const label = (t: string) => {
    if (t === 'array') return `${typeLabel(r.items, resolve)}[]`;
    if (t === 'string' && r.format === 'binary') return 'file';
    if (t === 'string' && r.format) return `string (${r.format})`;
    if (t === 'object' && !r.properties && r.additionalProperties && typeof r.additionalProperties === 'object') return `map of ${typeLabel(r.additionalProperties, resolve)}`;
    return t;
  };
  return types.length ? types.map(label).join(' or ') : 'any';
}

function limits(s: Schema | undefined, resolve: Resolve): string[] {
  const r = resolve(s);
  if (!r) return [];
  const out: string[] = [];
  const range = (lo: string | undefined, hi: string | undefined, unit: string) => {
    if (lo && hi) out.push(`${lo}–${hi}${unit}`);
    else if (lo) out.push(`at least ${lo}${unit}`);
    else if (hi) out.push(`at most ${hi}${unit}`);
  };
  range(r.minLength?.toString(), r.maxLength?.toString(), ' characters');
  range(r.minItems?.toString(), r.maxItems?.toString(), ' items');
  if (r.exclusiveMinimum !== undefined) out.push(`> ${r.exclusiveMinimum}`);
  if (r.minimum !== undefined) out.push(`≥ ${r.minimum}`);
  if (r.exclusiveMaximum !== undefined) out.push(`< ${r.exclusiveMaximum}`);
  if (r.maximum !== undefined) out.push(`≤ ${r.maximum}`);
  if (r.pattern) out.push(`pattern ${r.pattern}`);
  if (r.default !== undefined) out.push(`default ${json(r.default)}`);
  if (r.type === 'object' && r.additionalProperties === false) out.push('no other fields');
  if (r.type === 'array' && resolve(r.items)?.type !== 'object') out.push(...limits(r.items, resolve).map((l) => `each ${l}`));
  return out;
}

type Row = { name: string; type: string; required: boolean; limits: string[]; description?: string };

/** The fields of a schema, nested ones with dotted names (`meta.title`, `points[].x`). */
function fieldRows(schema: Schema | undefined, resolve: Resolve, prefix = '', depth = 0): Row[] {
  const r = resolve(schema);
  if (!r || depth > MAX_DEPTH) return [];
  const item = r.type === 'array' || (Array.isArray(r.type) && r.type.includes('array')) ? resolve(r.items) : undefined;
  const target = item?.properties ? item : r;
  if (!target.properties) return [];
  const base = item?.properties ? `${prefix}[]` : prefix;
  const rows: Row[] = [];
  for (const [name, field] of Object.entries(target.properties)) {
    const full = base ? `${base}.${name}` : name;
    const f = resolve(field);
    rows.push({ name: full, type: typeLabel(field, resolve), required: (target.required ?? []).includes(name), limits: limits(field, resolve), description: f?.description });
    rows.push(...fieldRows(field, resolve, full, depth + 1));
  }
  return rows;
}

function fieldTable(rows: Row[], firstColumn = 'Field'): string {
  if (!rows.length) return '';
  const body = rows
    .map(
      (row) =>
        `<tr><td><code>${escapeHtml(row.name)}</code>${row.required ? ' <span class="req">required</span>' : ''}</td><td><code>${escapeHtml(row.type)}</code></td><td>${row.limits.map((l) => escapeHtml(l)).join('; ')}</td><td>${prose(row.description)}</td></tr>`,
    )
    .join('');
  return `<div class="scroll"><table><thead><tr><th>${escapeHtml(firstColumn)}</th><th>Type</th><th>Limits</th><th>Notes</th></tr></thead><tbody>${body}</tbody></table></div>`;
}

const MEDIA_NAMES: Record<string, string> = { 'application/json': 'JSON body', 'multipart/form-data': 'Multipart form (multipart/form-data)' };

function requestBody(op: Operation, resolve: Resolve): string {
  const rb = op.requestBody;
  if (!rb?.content) return '';
  const parts = Object.entries(rb.content).map(([type, media]) => {
    const encoded = Object.entries(media.encoding ?? {})
      .filter(([, e]) => e.contentType)
      .map(([name, e]) => `<code>${escapeHtml(name)}</code> as ${escapeHtml(e.contentType!)}`);
    const rows = fieldRows(media.schema, resolve);
    const plain = resolve(media.schema)?.description;
    return `<h5>${escapeHtml(MEDIA_NAMES[type] ?? type)}</h5>${encoded.length ? `<p class="note">Parts sent as text: ${encoded.join(', ')}.</p>` : ''}${rows.length ? fieldTable(rows) : `<p>${prose(plain) || escapeHtml(typeLabel(media.schema, resolve))}</p>`}`;
  });
  return `<h4>Request body${rb.required ? '' : ' (optional)'}</h4>${rb.description ? `<p class="note">${prose(rb.description)}</p>` : ''}${parts.join('')}`;
}

function parameters(op: Operation, resolve: Resolve): string {
  const ps = op.parameters ?? [];
  if (!ps.length) return '';
  const rows = ps
    .map(
      (p) =>
        `<tr><td><code>${escapeHtml(p.name)}</code>${p.required ? ' <span class="req">required</span>' : ''}</td><td>${escapeHtml(p.in)}</td><td><code>${escapeHtml(typeLabel(p.schema, resolve))}</code></td><td>${limits(p.schema, resolve).map((l) => escapeHtml(l)).join('; ')}</td><td>${prose(p.description ?? p.schema?.description)}</td></tr>`,
    )
    .join('');
  return `<h4>Parameters</h4><div class="scroll"><table><thead><tr><th>Name</th><th>In</th><th>Type</th><th>Limits</th><th>Notes</th></tr></thead><tbody>${rows}</tbody></table></div>`;
}

function responses(op: Operation, resolve: Resolve): string {
  const rows = Object.entries(op.responses ?? {})
    .map(([status, r]) => {
      const types = Object.keys(r.content ?? {});
      const media = r.content?.['application/json'];
      const isError = media?.schema?.$ref === '#/components/schemas/Error';
      const fields = media && !isError ? fieldRows(media.schema, resolve) : [];
      const headers = Object.entries(r.headers ?? {}).map(([name, h]) => `<br>Header <code>${escapeHtml(name)}</code>: ${prose(h.description)}`);
      const detail = fields.length ? `<details><summary>Fields</summary>${fieldTable(fields)}</details>` : '';
      const cls = status.startsWith('2') ? 'ok' : 'err';
      return `<tr><td><span class="status ${cls}">${escapeHtml(status)}</span></td><td>${prose(r.description)}${headers.join('')}${detail}</td><td>${types.map((t) => `<code>${escapeHtml(t)}</code>`).join(' ')}${isError ? ' (error)' : ''}</td></tr>`;
    })
    .join('');
  return `<h4>Responses</h4><div class="scroll"><table><thead><tr><th>Status</th><th>Meaning</th><th>Content</th></tr></thead><tbody>${rows}</tbody></table></div>`;
}

const anchor = (s: string) => s.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '');

function operationHtml(base: string, path: string, method: string, op: Operation, resolve: Resolve): string {
  const id = op.operationId ?? anchor(`${method} ${path}`);
  const who = op['x-access']?.who;
  return `<article class="op" id="${escapeHtml(id)}">
<h3><span class="method ${escapeHtml(method)}">${escapeHtml(method.toUpperCase())}</span> <code class="path">${escapeHtml(base + path)}</code>${op['x-dev-only'] ? ' <span class="tag-dev">development only</span>' : ''}</h3>
<p class="summary">${prose(op.summary)}</p>
${op.description ? `<p>${prose(op.description)}</p>` : ''}
<p class="who"><strong>Who may call:</strong> ${prose(who)}</p>
${parameters(op, resolve)}${requestBody(op, resolve)}${responses(op, resolve)}
</article>`;
}

const STYLE = `
*{box-sizing:border-box}
body{margin:0;background:${colors.bg};color:${colors.text};font:15px/22px system-ui,-apple-system,"Segoe UI",Roboto,"Inter",sans-serif}
header{background:${colors.navBg};color:${colors.navText};padding:${space.xl}px}
header h1{margin:0 0 ${space.sm}px;color:${colors.navTextActive};font-size:26px;line-height:32px}
header a{color:${colors.navTextActive}}
header code{background:${colors.navActive};color:${colors.navTextActive}}
.layout{display:flex;gap:${space.xl}px;max-width:1400px;margin:0 auto;padding:${space.xl}px}
nav{flex:0 0 300px;overflow-wrap:anywhere;position:sticky;top:${space.lg}px;align-self:flex-start;max-height:calc(100vh - ${space.xxl}px);overflow:auto;font-size:13px;line-height:18px}
nav ul{list-style:none;margin:0;padding:0}
nav li li{padding-left:${space.md}px;margin:2px 0}
nav a{color:${colors.primary};text-decoration:none}
nav a:hover{text-decoration:underline}
nav .group{font-weight:600;margin-top:${space.md}px}
main{flex:1;min-width:0}
h2{font-size:20px;line-height:26px;margin:${space.xxl}px 0 ${space.sm}px;border-bottom:1px solid ${colors.border};padding-bottom:${space.xs}px}
h3{font-size:16px;margin:0 0 ${space.sm}px;display:flex;flex-wrap:wrap;align-items:center;gap:${space.sm}px}
h4{font-size:14px;margin:${space.lg}px 0 ${space.xs}px;color:${colors.textMuted};text-transform:uppercase;letter-spacing:.04em}
h5{font-size:14px;margin:${space.md}px 0 ${space.xs}px}
.op{background:${colors.surface};border:1px solid ${colors.border};border-radius:${radii.md}px;padding:${space.lg}px;margin:${space.md}px 0}
.summary{margin:0 0 ${space.sm}px;font-weight:500}
.who,.note{color:${colors.textMuted};margin:${space.xs}px 0}
code{font-family:${fonts.mono},ui-monospace,Menlo,Consolas,monospace;font-size:13px;background:${colors.surfaceAlt};padding:1px 4px;border-radius:${radii.sm}px;overflow-wrap:break-word}
.path{font-size:14px;background:none;padding:0;overflow-wrap:anywhere}
.method{display:inline-block;min-width:64px;text-align:center;font-weight:700;font-size:12px;color:${colors.primaryText};border-radius:${radii.sm}px;padding:2px ${space.sm}px}
.method.get{background:${colors.primary}}
.method.post{background:${colors.success}}
.method.put,.method.patch{background:${colors.warning}}
.method.delete{background:${colors.danger}}
.tag-dev{font-size:12px;color:${colors.warning};background:${colors.warningSoft};border-radius:${radii.sm}px;padding:1px ${space.sm}px}
.req{font-size:11px;color:${colors.danger}}
.status{font-weight:700}
.status.ok{color:${colors.success}}
.status.err{color:${colors.danger}}
table{border-collapse:collapse;width:100%;font-size:13px;line-height:18px;margin:${space.xs}px 0}
th,td{text-align:left;vertical-align:top;border-top:1px solid ${colors.border};padding:${space.xs}px ${space.sm}px}
th{color:${colors.textMuted};font-weight:600}
.scroll{overflow-x:auto}
details summary{cursor:pointer;color:${colors.primary};margin-top:${space.xs}px}
@media (max-width:900px){.layout{display:block;padding:${space.md}px}nav{position:static;max-height:none;margin-bottom:${space.lg}px}}
`;

/** The whole page. */
export function renderApiPage(doc: ApiDocument): string {
  const resolve = resolver(doc);
  const base = (doc.servers?.[0]?.url ?? '').replace(/\/$/, '');
  const ops: { tag: string; path: string; method: string; op: Operation }[] = [];
  for (const [path, item] of Object.entries(doc.paths ?? {})) {
    for (const method of METHODS) {
      const op = (item as Record<string, Operation | undefined>)[method];
      if (op) ops.push({ tag: op.tags?.[0] ?? 'Other', path, method, op });
    }
  }
  const tags = [...(doc.tags ?? []).map((t) => ({ name: t.name, description: t.description })), ...[...new Set(ops.map((o) => o.tag))].filter((n) => !doc.tags?.some((t) => t.name === n)).map((name) => ({ name, description: undefined }))];
  const sections = tags.map((t) => ({ ...t, ops: ops.filter((o) => o.tag === t.name) })).filter((t) => t.ops.length);
  const nav = sections
    .map(
      (t) =>
        `<li class="group"><a href="#tag-${escapeHtml(anchor(t.name))}">${escapeHtml(t.name)}</a><ul>${t.ops
          .map((o) => `<li><a href="#${escapeHtml(o.op.operationId ?? anchor(`${o.method} ${o.path}`))}">${escapeHtml(o.method.toUpperCase())} ${escapeHtml(o.path)}</a></li>`)
          .join('')}</ul></li>`,
    )
    .join('');
  const main = sections
    .map((t) => `<section id="tag-${escapeHtml(anchor(t.name))}"><h2>${escapeHtml(t.name)}</h2>${t.description ? `<p>${prose(t.description)}</p>` : ''}${t.ops.map((o) => operationHtml(base, o.path, o.method, o.op, resolve)).join('\n')}</section>`)
    .join('\n');
  const schemes = Object.entries(doc.components?.securitySchemes ?? {})
    .map(([, s]) => ('description' in s && s.description ? `<li>${prose(s.description)}</li>` : ''))
    .join('');
  const title = doc.info.title;
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)} reference</title>
<style>${STYLE}</style>
</head>
<body>
<header>
<h1>${escapeHtml(title)}</h1>
<p>${prose(doc.info.description)}</p>
<p>Every path below starts with <code>${escapeHtml(base || '/')}</code> on this server. Signing in:</p>
<ul>${schemes}</ul>
<p>The same reference as an OpenAPI ${escapeHtml(doc.openapi)} document: <a href="${escapeHtml(base)}/docs.json">${escapeHtml(base)}/docs.json</a>.</p>
</header>
<div class="layout">
<nav aria-label="Operations"><ul>${nav}</ul></nav>
<main>
${main}
</main>
</div>
</body>
</html>
`;
}

/**
 * Walks the Express router of an app and lists its routes as `METHOD /full/path`, descending into
 * mounted routers. Used by the role matrix (every route has an entry) and the bad-input walk
 * (every route refuses out-of-range ids and numbers with a 400 or 404, never a 500).
 */

/** The parts of Express 5's router layers (package `router` 2.x) that the walk reads. */
type RouterLayer = {
  name: string;
  rawPath?: unknown;
  route?: { path: string | string[]; methods: Record<string, boolean> };
  handle?: { stack?: RouterLayer[] };
};

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';
export type RouteKey = `${Uppercase<Method>} ${string}`;

function joinPath(prefix: string, p: string): string {
  const joined = `${prefix.replace(/\/$/, '')}/${p.replace(/^\//, '')}`;
  return joined.length > 1 ? joined.replace(/\/$/, '') : joined;
}

/** `METHOD /full/path` of every route layer, descending into mounted routers. */
function registeredRoutes(stack: RouterLayer[], prefix = ''): string[] {
  const out: string[] = [];
  for (const layer of stack) {
    if (layer.route) {
      const paths = Array.isArray(layer.route.path) ? layer.route.path : [layer.route.path];
      for (const p of paths) {
        for (const [m, on] of Object.entries(layer.route.methods)) if (on && m !== '_all') out.push(`${m.toUpperCase()} ${joinPath(prefix, p)}`);
      }
    } else if (Array.isArray(layer.handle?.stack)) {
      // A mounted router: router 2.x keeps the mount path as `rawPath` (its matchers are functions).
      if (typeof layer.rawPath !== 'string') throw new Error(`cannot tell where the router "${layer.name}" is mounted`);
      out.push(...registeredRoutes(layer.handle.stack, joinPath(prefix, layer.rawPath)));
    }
  }
  return out;
}

const isOurApiRoute = (r: string) => {
  const path = r.slice(r.indexOf(' ') + 1);
  return path.startsWith('/api/') && !path.startsWith('/api/auth/');
};
const isAuthRoute = (r: string) => {
  const path = r.slice(r.indexOf(' ') + 1);
  return path.startsWith('/api/auth/') && !path.includes('{*');
};

/**
 * Every route of our JSON API (better-auth's /api/auth/* aside), sorted, as `METHOD /path`.
 * `{ auth: true }` gives the /api/auth routes registered in server/app.ts instead (the checked
 * sign-in, sign-up and mailed-link POSTs; not better-auth's catch-all `/api/auth/{*any}`).
 */
export function apiRoutesOf(app: unknown, opts: { auth?: boolean } = {}): RouteKey[] {
  const stack = (app as { router: { stack: RouterLayer[] } }).router.stack;
  return [...new Set(registeredRoutes(stack).filter(opts.auth ? isAuthRoute : isOurApiRoute))].sort() as RouteKey[];
}

/** The method and path of a route key. */
export function splitRoute(key: string): { method: Method; path: string } {
  const i = key.indexOf(' ');
  return { method: key.slice(0, i).toLowerCase() as Method, path: key.slice(i + 1) };
}

/** The names of a route path's parameters (`/a/:x/v:y` → x, y). */
export function paramNames(path: string): string[] {
  return [...path.matchAll(/:(\w+)/g)].map((m) => m[1]!);
}

/** A route path with its parameters filled in (URI-encoded). */
export function fillPath(path: string, params: Record<string, string>): string {
  return path.replace(/:(\w+)/g, (_m, name: string) => {
    const v = params[name];
    if (v === undefined) throw new Error(`no value for :${name} in ${path}`);
    return encodeURIComponent(v);
  });
}

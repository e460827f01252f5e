import type { Primitive, Rect, Scene } from '@/shared/figure';

export type PathItem = Extract<Primitive, { kind: 'path' }>;
export type TextItem = Extract<Primitive, { kind: 'text' }>;

export const paths = (scene: Scene, role?: string) => scene.items.filter((p): p is PathItem => p.kind === 'path' && (role === undefined || p.role === role));
export const texts = (scene: Scene, role?: string) => scene.items.filter((p): p is TextItem => p.kind === 'text' && (role === undefined || p.role === role));

/** The points of path data made of M/L/H/V commands with absolute coordinates (what the builder writes). */
export function pathPoints(d: string): [number, number][] {
  const out: [number, number][] = [];
  let x = 0;
  let y = 0;
  for (const m of d.matchAll(/([MLHVZA])([^MLHVZA]*)/g)) {
    const nums = (m[2] ?? '').split(/[\s,]+/).filter(Boolean).map(Number);
    switch (m[1]) {
      case 'M':
      case 'L':
        for (let i = 0; i + 1 < nums.length; i += 2) out.push([(x = nums[i]!), (y = nums[i + 1]!)]);
        break;
      case 'H':
        for (const v of nums) out.push([(x = v), y]);
        break;
      case 'V':
        for (const v of nums) out.push([x, (y = v)]);
        break;
      default:
    }
  }
  return out;
}

export function bounds(pts: [number, number][]): Rect {
  const xs = pts.map((p) => p[0]);
  const ys = pts.map((p) => p[1]);
  return { x: Math.min(...xs), y: Math.min(...ys), width: Math.max(...xs) - Math.min(...xs), height: Math.max(...ys) - Math.min(...ys) };
}

export const inside = (r: Rect, [x, y]: [number, number]) => x >= r.x && x <= r.x + r.width && y >= r.y && y <= r.y + r.height;

/** The legend's box (its background rectangle). */
export function legendBox(scene: Scene): Rect | null {
  const r = scene.items.find((p) => p.kind === 'rect' && p.role === 'legend');
  return r && r.kind === 'rect' ? { x: r.x, y: r.y, width: r.width, height: r.height } : null;
}

/** Every number in a scene, for NaN checks. */
export function allNumbers(scene: Scene): number[] {
  const out: number[] = [scene.widthPt, scene.heightPt, scene.plot.x, scene.plot.y, scene.plot.width, scene.plot.height];
  for (const p of scene.items) {
    for (const v of Object.values(p)) if (typeof v === 'number') out.push(v);
    if (p.kind === 'path') out.push(...pathPoints(p.d).flat());
  }
  return out;
}

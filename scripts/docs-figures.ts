/**
 * `npm run docs:figures`: renders the public demo figures (server/seed/seed-figures.ts) to docs/figures/ as
 * SVG and PNG, through the same public render path the API serves, on a throwaway PostgreSQL
 * with the demo seed. Run it after changing the renderers or the themes, and commit the files.
 */
import fs from 'node:fs';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import { figures } from '../db/schema';
import { seedDemo } from '../server/seed/seed';
import { DEMO_FIGURES } from '../server/seed/seed-figures';
import { closeContext, createContext } from '../server/context';
import { runMigrations } from '../db/client';
import { loadEnv } from '../server/env';
import { renderPublic } from '../server/services/figure-renders';
import { ensureDatabase, startCluster, stopCluster, tmpRoot } from './lib/postgres';
import { formatBytes } from '../shared/bytes';
import { slugify } from '../shared/slug';

const OUT = path.resolve(__dirname, '../docs/figures');
/** PNGs for a README: sharp on a high-density screen, small enough to commit; one of the resolutions a public figure offers. */
const DPI = 150;

/** "publication-limits-on-the-v-benchmark-dijet": theme and title words, whole words up to 45 characters. */
function fileName(theme: string, title: string): string {
  return slugify(`${theme} ${title}`, { max: 45, wholeWords: true });
}

async function main() {
  const home = tmpRoot();
  const cluster = await startCluster({ home, throwaway: true });
  try {
    await ensureDatabase(cluster, 'docs');
    const ctx = createContext(loadEnv({ DATABASE_URL: cluster.url('docs'), NODE_ENV: 'test', PUBLIC_URL: 'http://127.0.0.1:8080', WORKERS: '0' }));
    await runMigrations(ctx.db);
    await seedDemo(ctx);
    fs.mkdirSync(OUT, { recursive: true });
    for (const demo of DEMO_FIGURES.filter((d) => d.isPublic)) {
      const [fig] = await ctx.db.select({ id: figures.id }).from(figures).where(eq(figures.title, demo.spec.title));
      if (!fig) throw new Error(`demo figure "${demo.spec.title}" was not seeded`);
      const base = fileName(demo.spec.theme, demo.spec.title);
      for (const format of ['svg', 'png'] as const) {
        const out = await renderPublic(ctx, fig.id, { format, dpi: DPI });
        if (out.notes.length) console.warn(`  ${base}: ${out.notes.join('; ')}`);
        fs.writeFileSync(path.join(OUT, `${base}.${format}`), out.body);
        console.log(`docs/figures/${base}.${format}  ${formatBytes(out.body.length)}`);
      }
    }
    await closeContext(ctx);
  } finally {
    stopCluster(cluster);
    fs.rmSync(home, { recursive: true, force: true });
  }
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(e);
    process.exit(1);
  },
);

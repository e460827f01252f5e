import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';

/**
 * Builds the web app (`expo export --platform web` into dist/) when its sources changed since the
 * last build; the hash of those sources is kept in dist/.source-hash.
 */
const ROOT = path.resolve(__dirname, '..');
const DIST = path.join(ROOT, 'dist');
const SOURCES = ['app', 'components', 'hooks', 'shared', 'themes', 'assets', 'app.json', 'babel.config.js', 'package-lock.json', 'tsconfig.json'];

function hashSources(): string {
  const h = createHash('sha256');
  const walk = (p: string) => {
    if (!fs.existsSync(p)) return;
    const st = fs.statSync(p);
    if (st.isDirectory()) {
      for (const name of fs.readdirSync(p).sort()) walk(path.join(p, name));
    } else {
      h.update(path.relative(ROOT, p));
      h.update(fs.readFileSync(p));
    }
  };
  for (const s of SOURCES) walk(path.join(ROOT, s));
  return h.digest('hex');
}

export function buildWebIfChanged(force = false): void {
  const hash = hashSources();
  const stamp = path.join(DIST, '.source-hash');
  if (!force && fs.existsSync(stamp) && fs.readFileSync(stamp, 'utf8') === hash && fs.existsSync(path.join(DIST, 'index.html'))) {
    console.log('[web] up to date');
    return;
  }
  console.log('[web] building the web app (expo export --platform web)…');
  const started = Date.now();
  const r = spawnSync(path.join(ROOT, 'node_modules/.bin/expo'), ['export', '--platform', 'web', '--output-dir', 'dist'], {
    cwd: ROOT,
    stdio: ['ignore', 'inherit', 'inherit'],
    env: { ...process.env, CI: '1', EXPO_NO_TELEMETRY: '1', EXPO_OFFLINE: '1' },
  });
  if (r.status !== 0) throw new Error(`expo export failed with status ${r.status}`);
  fs.writeFileSync(stamp, hash);
  console.log(`[web] built in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

if (require.main === module) buildWebIfChanged(process.argv.includes('--force'));

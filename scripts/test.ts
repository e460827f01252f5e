import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { createContext, closeContext } from '../server/context';
import { runMigrations } from '../db/client';
import { loadEnv } from '../server/env';
import { buildWebIfChanged } from './build-web';
import { ensureDatabase, startCluster, stopCluster, tmpRoot, type Cluster } from './lib/postgres';

/**
 * `npm test`: a throwaway PostgreSQL cluster on a free loopback port, Debian's Chromium when
 * missing, the web build when stale; then jest (unit, components, api; then e2e one file at a
 * time) and a closing line `N passed, N failed`; without a path filter it first runs ESLint (one check). Extra arguments go to jest (e.g. a path filter).
 */
const ROOT = path.resolve(__dirname, '..');
const CHROMIUM = '/usr/bin/chromium';
export const TEMPLATE_DB = 'bw_template';

function ensureChromium(): string | null {
  if (fs.existsSync(CHROMIUM)) return null;
  if (process.getuid?.() !== 0) return 'Chromium is missing: install it with  sudo apt-get install -y chromium';
  console.log("[test] installing Debian's chromium (apt-get)…");
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  const r = spawnSync('apt-get', ['install', '-y', '-qq', 'chromium', 'poppler-utils'], { stdio: 'inherit', env });
  return r.status === 0 && fs.existsSync(CHROMIUM) ? null : 'apt-get could not install chromium';
}

type JestSummary = { passed: number; failed: number };

function runJest(args: string[], outFile: string, env: Record<string, string | undefined>): JestSummary {
  fs.rmSync(outFile, { force: true });
  spawnSync(process.execPath, [path.join(ROOT, 'node_modules/jest/bin/jest.js'), '--forceExit', ...args, '--json', `--outputFile=${outFile}`], {
    cwd: ROOT,
    stdio: 'inherit',
    env: env as NodeJS.ProcessEnv,
  });
  if (!fs.existsSync(outFile)) return { passed: 0, failed: 1 };
  const r = JSON.parse(fs.readFileSync(outFile, 'utf8')) as {
    numPassedTests: number;
    numFailedTests: number;
    numRuntimeErrorTestSuites: number;
  };
  return { passed: r.numPassedTests, failed: r.numFailedTests + r.numRuntimeErrorTestSuites };
}

async function main() {
  const jestArgs = process.argv.slice(2);
  const home = tmpRoot();
  let cluster: Cluster | undefined;
  const total: JestSummary = { passed: 0, failed: 0 };
  try {
    cluster = await startCluster({ home, throwaway: true });
    await ensureDatabase(cluster, TEMPLATE_DB);
    const ctx = createContext(loadEnv({ DATABASE_URL: cluster.url(TEMPLATE_DB), NODE_ENV: 'test' }));
    await runMigrations(ctx.db);
    await closeContext(ctx);

    const chromiumProblem = ensureChromium();
    buildWebIfChanged();

    fs.mkdirSync(path.join(ROOT, 'tmp'), { recursive: true });
    const env: Record<string, string | undefined> = {
      ...process.env,
      NODE_ENV: 'test',
      TEST_PG_URL: cluster.url('postgres'),
      TEST_TEMPLATE_DB: TEMPLATE_DB,
      ...(chromiumProblem ? { CHROMIUM_PROBLEM: chromiumProblem } : {}),
    };
    // The layering and lint rules (eslint.config.mjs) count as one check of the whole tree.
    if (jestArgs.length === 0) {
      console.log('[test] npm run lint (ESLint: typescript-eslint and the layering rules)…');
      const lint = spawnSync(path.join(ROOT, 'node_modules/.bin/eslint'), ['.'], { cwd: ROOT, stdio: 'inherit' });
      if (lint.status === 0) total.passed += 1;
      else total.failed += 1;
    }
    // Path filters first: after --selectProjects they would be read as project names.
    const a = runJest([...jestArgs, '--passWithNoTests', '--selectProjects', 'unit', 'components', 'api'], path.join(ROOT, 'tmp/jest-main.json'), env);
    const b = runJest([...jestArgs, '--passWithNoTests', '--runInBand', '--selectProjects', 'e2e'], path.join(ROOT, 'tmp/jest-e2e.json'), env);
    total.passed += a.passed + b.passed;
    total.failed += a.failed + b.failed;
  } catch (err) {
    console.error(`[test] ${(err as Error).stack ?? err}`);
    total.failed += 1;
  } finally {
    if (cluster) stopCluster(cluster);
    fs.rmSync(home, { recursive: true, force: true });
  }
  console.log(`${total.passed} passed, ${total.failed} failed`);
  process.exit(total.failed > 0 ? 1 : 0);
}

void main();

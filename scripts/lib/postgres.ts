import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';

/**
 * A private PostgreSQL cluster on 127.0.0.1, from Debian's packages: used by `npm start` (a
 * persistent cluster under .data/) and `npm test` (a throwaway one under the temp folder).
 */

const isRoot = process.getuid?.() === 0;

function log(msg: string) {
  console.log(`[postgres] ${msg}`);
}

/** The bin folder of the newest installed PostgreSQL; installs Debian's package when missing and root. */
export function ensurePostgresBinaries(): string {
  const find = () => {
    const root = '/usr/lib/postgresql';
    if (!fs.existsSync(root)) return undefined;
    const versions = fs
      .readdirSync(root)
      .filter((v) => fs.existsSync(path.join(root, v, 'bin', 'initdb')))
      .sort((a, b) => Number(b) - Number(a));
    return versions[0] ? path.join(root, versions[0], 'bin') : undefined;
  };
  let bin = find();
  if (bin) return bin;
  if (!isRoot) {
    throw new Error(
      "PostgreSQL's server binaries are missing (no /usr/lib/postgresql/*/bin/initdb).\n" +
        'Install them with:  sudo apt-get install -y postgresql\n' +
        'or set DATABASE_URL to a database you already have.',
    );
  }
  log('server binaries missing: installing Debian package "postgresql" (apt-get)…');
  run('apt-get', ['update', '-qq'], { DEBIAN_FRONTEND: 'noninteractive' });
  run('apt-get', ['install', '-y', '-qq', '--no-install-recommends', 'postgresql'], { DEBIAN_FRONTEND: 'noninteractive' });
  bin = find();
  if (!bin) throw new Error('apt-get finished but initdb is still missing under /usr/lib/postgresql');
  return bin;
}

function run(cmd: string, args: string[], extraEnv: Record<string, string> = {}) {
  const r = spawnSync(cmd, args, { stdio: 'inherit', env: { ...process.env, ...extraEnv } });
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed with status ${r.status}`);
}

/** Runs a PostgreSQL binary, as the postgres user when we are root (initdb and postgres refuse root). */
function pgExec(bin: string, tool: string, args: string[]): string {
  const file = path.join(bin, tool);
  const [cmd, argv] = isRoot ? ['runuser', ['-u', 'postgres', '--', file, ...args]] : [file, args];
  try {
    return execFileSync(cmd, argv, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (err) {
    const e = err as { stderr?: string; stdout?: string; message: string };
    throw new Error(`${tool} failed: ${e.stderr || e.stdout || e.message}`, { cause: err });
  }
}

function ensurePostgresUser() {
  if (!isRoot) return;
  const r = spawnSync('id', ['-u', 'postgres'], { stdio: 'ignore' });
  if (r.status === 0) return;
  log('creating system user "postgres"');
  run('useradd', ['--system', '--home-dir', '/var/lib/postgresql', '--shell', '/bin/bash', 'postgres']);
}

/** True when the postgres user can reach `dir` (every parent traversable). */
function reachableByPostgres(dir: string): boolean {
  if (!isRoot) return true;
  return spawnSync('runuser', ['-u', 'postgres', '--', 'test', '-x', dir], { stdio: 'ignore' }).status === 0;
}

function chownPostgres(p: string) {
  if (isRoot) run('chown', ['-R', 'postgres:postgres', p]);
}

export type Cluster = { bin: string; dataDir: string; socketDir: string; port: number; logFile: string; url: (db: string) => string };

/**
 * Where a cluster for `wanted` lives. PostgreSQL runs as the postgres user, so when the checkout
 * is in a folder that user cannot enter (say under /root), the cluster moves to /var/tmp.
 */
export function clusterHome(wanted: string): string {
  fs.mkdirSync(wanted, { recursive: true });
  if (reachableByPostgres(wanted)) return wanted;
  const alt = path.join('/var/tmp', `bandwright-${createHash('sha1').update(wanted).digest('hex').slice(0, 10)}`);
  log(`${wanted} is not reachable by the postgres user; keeping the cluster in ${alt} instead`);
  fs.mkdirSync(alt, { recursive: true, mode: 0o755 });
  return alt;
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

async function portFree(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const s = net.createServer();
    s.once('error', () => resolve(false));
    s.listen(port, '127.0.0.1', () => s.close(() => resolve(true)));
  });
}

/**
 * Creates (first time) and starts a cluster in `home`, listening on 127.0.0.1 only. `throwaway`
 * turns durability off for test clusters.
 */
export async function startCluster(opts: { home: string; port?: number; throwaway?: boolean }): Promise<Cluster> {
  const bin = ensurePostgresBinaries();
  ensurePostgresUser();
  const home = opts.home;
  const dataDir = path.join(home, 'pg');
  const socketDir = path.join(home, 'run');
  const logFile = path.join(home, 'postgres.log');
  fs.mkdirSync(socketDir, { recursive: true });
  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) {
    log(`creating a new cluster in ${dataDir}`);
    fs.mkdirSync(dataDir, { recursive: true, mode: 0o700 });
    chownPostgres(dataDir);
    pgExec(bin, 'initdb', ['-D', dataDir, '-U', 'postgres', '--auth=trust', '--encoding=UTF8', '--locale=C.UTF-8']);
  }
  chownPostgres(socketDir);
  if (!fs.existsSync(logFile)) fs.writeFileSync(logFile, '');
  chownPostgres(logFile);
  fs.chmodSync(dataDir, 0o700);

  const port = opts.port ?? (await freePort());
  const status = spawnSync(isRoot ? 'runuser' : path.join(bin, 'pg_ctl'), isRoot ? ['-u', 'postgres', '--', path.join(bin, 'pg_ctl'), '-D', dataDir, 'status'] : ['-D', dataDir, 'status'], { encoding: 'utf8' });
  if (status.status === 0) {
    log('a server for this cluster is already running: stopping it first');
    pgExec(bin, 'pg_ctl', ['-D', dataDir, '-m', 'fast', '-w', 'stop']);
  }
  if (!(await portFree(port))) throw new Error(`Port ${port} on 127.0.0.1 is taken; set PGPORT to another port`);
  const settings = [`-k ${socketDir}`, '-h 127.0.0.1', `-p ${port}`, "-c max_connections=200"];
  if (opts.throwaway) settings.push('-c fsync=off', '-c full_page_writes=off', '-c synchronous_commit=off');
  pgExec(bin, 'pg_ctl', ['-D', dataDir, '-l', logFile, '-w', '-t', '30', '-o', settings.join(' '), 'start']);
  log(`running on 127.0.0.1:${port} (data ${dataDir})`);
  return { bin, dataDir, socketDir, port, logFile, url: (db) => `postgres://postgres@127.0.0.1:${port}/${db}` };
}

export function stopCluster(c: Cluster) {
  try {
    pgExec(c.bin, 'pg_ctl', ['-D', c.dataDir, '-m', 'fast', '-w', '-t', '30', 'stop']);
    log('stopped');
  } catch (err) {
    console.error(`[postgres] stop failed: ${(err as Error).message}`);
  }
}

/** Creates database `name` if it does not exist. */
export async function ensureDatabase(c: Cluster, name: string) {
  const { Client } = await import('pg');
  const client = new Client({ connectionString: c.url('postgres') });
  await client.connect();
  try {
    const r = await client.query('select 1 from pg_database where datname = $1', [name]);
    if (r.rowCount === 0) await client.query(`create database "${name.replace(/"/g, '')}"`);
  } finally {
    await client.end();
  }
}

/** A fresh temporary folder the postgres user can enter (mkdtemp makes it 0700). */
export function tmpRoot(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'bandwright-test-'));
  fs.chmodSync(dir, 0o755);
  return dir;
}

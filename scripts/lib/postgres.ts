// Starts a PostgreSQL cluster of our own on 127.0.0.1 from Debian's binaries.
// Used by `npm start` (cluster in .data/pg) and `npm test` (throwaway cluster in a temp folder).
import { execFileSync, spawnSync } from 'node:child_process';
import { chownSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statfsSync } from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';

export class PostgresSetupError extends Error {}

const isRoot = () => typeof process.getuid === 'function' && process.getuid() === 0;

/** Finds initdb/pg_ctl: Debian's /usr/lib/postgresql/<major>/bin, else pg_config --bindir. */
export function findPgBin(): string | null {
	const base = '/usr/lib/postgresql';
	if (existsSync(base)) {
		const majors = readdirSync(base)
			.filter((d) => existsSync(path.join(base, d, 'bin', 'initdb')))
			.sort((a, b) => Number(b) - Number(a));
		if (majors.length > 0) return path.join(base, majors[0], 'bin');
	}
	const r = spawnSync('pg_config', ['--bindir'], { encoding: 'utf8' });
	if (r.status === 0) {
		const dir = r.stdout.trim();
		if (existsSync(path.join(dir, 'initdb'))) return dir;
	}
	return null;
}

/** Finds the binaries, installing Debian's `postgresql` with apt-get when missing and we are root. */
export function ensurePgBin(log: (msg: string) => void = console.error): string {
	let bin = findPgBin();
	if (bin) return bin;
	if (!isRoot()) {
		throw new PostgresSetupError(
			'PostgreSQL server binaries not found: install them with `sudo apt-get install -y postgresql` (or set DATABASE_URL to an existing server).'
		);
	}
	log('PostgreSQL not found; installing Debian package `postgresql` with apt-get…');
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	execFileSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
	execFileSync('apt-get', ['install', '-y', '-qq', 'postgresql'], { stdio: 'inherit', env });
	bin = findPgBin();
	if (!bin) throw new PostgresSetupError('apt-get installed postgresql but initdb was not found under /usr/lib/postgresql/*/bin.');
	return bin;
}

export function portIsFree(port: number, host = '127.0.0.1'): Promise<boolean> {
	return new Promise((resolve) => {
		const srv = net.createServer();
		srv.once('error', () => resolve(false));
		srv.listen(port, host, () => srv.close(() => resolve(true)));
	});
}

/** A free TCP port chosen by the kernel. */
export function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const srv = net.createServer();
		srv.once('error', reject);
		srv.listen(0, '127.0.0.1', () => {
			const addr = srv.address();
			const port = typeof addr === 'object' && addr ? addr.port : 0;
			srv.close(() => resolve(port));
		});
	});
}

function runPg(bin: string, tool: string, args: string[], opts: { quiet?: boolean } = {}) {
	const cmd = path.join(bin, tool);
	const full = isRoot() ? ['runuser', '-u', 'postgres', '--', cmd, ...args] : [cmd, ...args];
	return spawnSync(full[0], full.slice(1), { encoding: 'utf8', stdio: opts.quiet ? 'pipe' : 'pipe' });
}

function chownToPostgres(dir: string) {
	if (!isRoot()) return;
	const uid = Number(execFileSync('id', ['-u', 'postgres'], { encoding: 'utf8' }).trim());
	const gid = Number(execFileSync('id', ['-g', 'postgres'], { encoding: 'utf8' }).trim());
	chownSync(dir, uid, gid);
}

function ensureUserExists() {
	if (!isRoot()) return;
	const r = spawnSync('id', ['-u', 'postgres']);
	if (r.status !== 0) throw new PostgresSetupError('The `postgres` system user is missing: reinstall Debian package `postgresql`.');
}

export interface Cluster {
	url: string;
	port: number;
	dataDir: string;
	stop: () => void;
}

export interface ClusterOptions {
	/** Folder that holds the cluster (created when missing). */
	dir: string;
	port: number;
	database: string;
	log?: (msg: string) => void;
}

/** Explains a failed pg_ctl start in one line from its log. */
function explainStartFailure(logFile: string, port: number, dataDir: string): string {
	const text = existsSync(logFile) ? readFileSync(logFile, 'utf8') : '';
	if (/could not bind|Address already in use/i.test(text))
		return `PostgreSQL could not start: port ${port} on 127.0.0.1 is taken (set PGPORT to another port).`;
	if (/lock file "postmaster\.pid" already exists/i.test(text))
		return `PostgreSQL could not start: a stale ${path.join(dataDir, 'postmaster.pid')} is in the way; if no PostgreSQL runs from ${dataDir}, delete that file.`;
	if (/No space left on device/i.test(text)) return `PostgreSQL could not start: the disk holding ${dataDir} is full.`;
	const last = text.trim().split('\n').filter(Boolean).slice(-1)[0] ?? 'no log output';
	return `PostgreSQL could not start (log ${logFile}): ${last}`;
}

/** Creates (once) and starts a cluster on 127.0.0.1:port, TCP only, trust auth for local loopback. */
export async function startCluster(opts: ClusterOptions): Promise<Cluster> {
	const log = opts.log ?? ((m: string) => console.error(m));
	const bin = ensurePgBin(log);
	ensureUserExists();
	const dataDir = path.join(opts.dir, 'data');
	const logFile = path.join(opts.dir, 'postgres.log');
	mkdirSync(opts.dir, { recursive: true });
	chownToPostgres(opts.dir);
	try {
		const fs = statfsSync(opts.dir);
		if (fs.bavail * fs.bsize < 64 * 1024 * 1024)
			throw new PostgresSetupError(`PostgreSQL cannot start: less than 64 MB free on the disk holding ${opts.dir}.`);
	} catch (e) {
		if (e instanceof PostgresSetupError) throw e;
	}

	if (!existsSync(path.join(dataDir, 'PG_VERSION'))) {
		const r = runPg(bin, 'initdb', ['-D', dataDir, '-U', 'postgres', '--auth=trust', '--encoding=UTF8', '--locale=C.UTF-8']);
		if (r.status !== 0) {
			const msg = `${r.stderr}${r.stdout}`;
			if (/No space left/i.test(msg)) throw new PostgresSetupError(`initdb failed: the disk holding ${dataDir} is full.`);
			throw new PostgresSetupError(`initdb failed: ${msg.trim().split('\n').slice(-1)[0]}`);
		}
	}

	const pidFile = path.join(dataDir, 'postmaster.pid');
	const status = runPg(bin, 'pg_ctl', ['-D', dataDir, 'status']);
	const alreadyRunning = status.status === 0;
	if (!alreadyRunning) {
		if (!(await portIsFree(opts.port))) {
			throw new PostgresSetupError(
				`PostgreSQL could not start: port ${opts.port} on 127.0.0.1 is taken (set PGPORT to another port, or DATABASE_URL to use that server).`
			);
		}
		if (existsSync(pidFile)) {
			// pg_ctl status says not running, so the pid file is stale: PostgreSQL itself refuses to start
			// only when the pid in it is alive, so we say so plainly rather than deleting someone's file.
			log(`note: removing stale ${pidFile}`);
			rmSync(pidFile, { force: true });
		}
		const r = runPg(bin, 'pg_ctl', [
			'-D',
			dataDir,
			'-l',
			logFile,
			'-w',
			'-t',
			'60',
			'-o',
			`-c listen_addresses=127.0.0.1 -c port=${opts.port} -c unix_socket_directories='' -c fsync=${process.env.PG_FSYNC ?? 'on'}`,
			'start'
		]);
		if (r.status !== 0) throw new PostgresSetupError(explainStartFailure(logFile, opts.port, dataDir));
	} else {
		log(`PostgreSQL already running from ${dataDir}`);
	}

	const url = `postgres://postgres@127.0.0.1:${opts.port}/${opts.database}`;
	await createDatabase(opts.port, opts.database);

	let stopped = false;
	const stop = () => {
		if (stopped || alreadyRunning) return;
		stopped = true;
		runPg(bin, 'pg_ctl', ['-D', dataDir, '-m', 'fast', '-w', 'stop']);
	};
	return { url, port: opts.port, dataDir, stop };
}

async function createDatabase(port: number, database: string) {
	const pg = await import('pg');
	const client = new pg.default.Client({ host: '127.0.0.1', port, user: 'postgres', database: 'postgres' });
	await client.connect();
	try {
		const r = await client.query('SELECT 1 FROM pg_database WHERE datname = $1', [database]);
		if (r.rowCount === 0) await client.query(`CREATE DATABASE "${database.replace(/"/g, '')}"`);
	} finally {
		await client.end();
	}
}

/** A throwaway cluster for tests: a temp folder removed by stop(). */
export async function startThrowawayCluster(database = 'runnel_test'): Promise<Cluster> {
	const dir = path.join(os.tmpdir(), `runnel-pg-${process.pid}-${Date.now()}`);
	const port = await freePort();
	process.env.PG_FSYNC = 'off';
	const cluster = await startCluster({ dir, port, database, log: () => {} });
	return {
		...cluster,
		stop: () => {
			cluster.stop();
			rmSync(dir, { recursive: true, force: true });
		}
	};
}

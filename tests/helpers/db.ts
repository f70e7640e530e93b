// A database of its own for a test file that must not share state with the others (key material,
// a sender pointed at a broken SMTP server…): created in the test cluster, migrated, dropped after.
import { spawnSync } from 'node:child_process';
import pg from 'pg';
import { ROOT } from './app';

async function onMain<T>(mainUrl: string, fn: (c: pg.Client) => Promise<T>): Promise<T> {
	const c = new pg.Client({ connectionString: mainUrl });
	await c.connect();
	try {
		return await fn(c);
	} finally {
		await c.end();
	}
}

/** Creates and migrates `<prefix>_<pid>` next to DATABASE_URL's database; returns its URL and a drop function. */
export async function createOwnDatabase(prefix: string): Promise<{ url: string; drop: () => Promise<void> }> {
	const mainUrl = process.env.DATABASE_URL;
	if (!mainUrl) throw new Error('DATABASE_URL is not set (run through npm test)');
	const name = `${prefix}_${process.pid}`;
	if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`bad database name ${name}`);
	await onMain(mainUrl, (c) => c.query(`drop database if exists ${name} with (force)`).then(() => c.query(`create database ${name}`)));
	const url = new URL(mainUrl);
	url.pathname = `/${name}`;
	const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/migrate.ts'], {
		cwd: ROOT,
		env: { ...process.env, DATABASE_URL: url.href },
		encoding: 'utf8'
	});
	if (r.status !== 0) throw new Error(`migrating ${name} failed: ${r.stderr}`);
	return {
		url: url.href,
		drop: () => onMain(mainUrl, (c) => c.query(`drop database if exists ${name} with (force)`)).then(() => undefined)
	};
}

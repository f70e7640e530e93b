// `runnel release verify DIR|VERSION`: proves a release is the one the hub signed, with only the
// public key set (JWKS): the manifest's signature, then each file's size and SHA-256.
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import type { JSONWebKeySet } from 'jose';
import type { Context } from '../context';
import { CliError, EXIT, UsageError } from '../exit-codes';
import { readText } from '../http';
import { formatBytes } from '../output';
import type { Registry } from '../program';
import type { FileCheck, SignedManifest } from '../release-verify';

// jose and zod are loaded only when a release is verified (the CLI starts faster without them).
const verifier = () => import('../release-verify');

/** The signed manifest's file name in a release folder (MANIFEST_JWS_FILE of src/lib/schema/release-manifest; a test keeps them equal). */
export const MANIFEST_JWS_NAME = 'manifest.jws';

interface VerifyOptions {
	jwks?: string;
	manifest?: string;
}

async function loadJwks(ctx: Context, opts: VerifyOptions): Promise<{ jwks: JSONWebKeySet; from: string }> {
	if (opts.jwks && !/^https?:\/\//i.test(opts.jwks)) {
		let text: string;
		try {
			text = readFileSync(opts.jwks, 'utf8');
		} catch (e) {
			throw new CliError(`cannot read the key set ${opts.jwks}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
		}
		return { jwks: (await verifier()).parseJwks(text, opts.jwks), from: opts.jwks };
	}
	const url = opts.jwks ?? `${ctx.requireUrl()}/.well-known/jwks.json`;
	const client = ctx.client({ needToken: false, url: new URL(url).origin, token: null });
	const res = await client.request({ path: url, auth: false, headers: { accept: 'application/jwk-set+json, application/json' } });
	return { jwks: (await verifier()).parseJwks(await readText(res.body, 1024 * 1024), url), from: url };
}

const STATUS_WORDS: Record<FileCheck['status'], string> = {
	ok: 'ok',
	missing: 'MISSING',
	'size-mismatch': 'SIZE DIFFERS',
	'hash-mismatch': 'SHA-256 DIFFERS'
};

async function report(
	ctx: Context,
	signed: SignedManifest,
	checks: FileCheck[],
	keysFrom: string,
	extra: { unlisted: string[]; plainManifest: boolean | null }
): Promise<number> {
	const failed = checks.filter((c) => c.status !== 'ok');
	const ok = failed.length === 0 && extra.plainManifest !== false;
	if (ctx.opts.json) {
		await ctx.ui.printJson({
			ok,
			version: signed.manifest.version,
			alg: signed.alg,
			kid: signed.kid,
			keys_from: keysFrom,
			files: checks,
			plain_manifest_matches: extra.plainManifest,
			unlisted_files: extra.unlisted
		});
	} else {
		await ctx.ui.line(
			`release ${signed.manifest.version}: signature ok (${signed.alg}${signed.kid ? `, key ${signed.kid}` : ''}; keys from ${keysFrom})`
		);
		if (extra.plainManifest === false)
			await ctx.ui.line(`${ctx.ui.paint('manifest.json DIFFERS', 'red')} from the signed manifest (trust only manifest.jws)`);
		for (const u of extra.unlisted) ctx.ui.warn(`${u} is not in the manifest (not covered by the signature)`);
		await ctx.ui.line(
			`${ok ? 'verified' : ctx.ui.paint('FAILED', 'red')}: ${checks.length - failed.length} of ${checks.length} files match the signed manifest`
		);
	}
	return ok ? EXIT.ok : EXIT.error;
}

async function fileLine(ctx: Context, c: FileCheck): Promise<void> {
	if (ctx.opts.json) return;
	const word = STATUS_WORDS[c.status];
	const painted = c.status === 'ok' ? ctx.ui.paint(word, 'green') : ctx.ui.paint(word, 'red');
	const detail =
		c.status === 'ok'
			? formatBytes(c.expected.bytes)
			: c.status === 'missing'
				? 'not found'
				: c.status === 'size-mismatch'
					? `${c.actual!.bytes} bytes, the manifest says ${c.expected.bytes}`
					: `${c.actual!.sha256.slice(0, 16)}…, the manifest says ${c.expected.sha256.slice(0, 16)}…`;
	await ctx.ui.line(`${painted} ${c.name}  ${detail}`);
}

async function verifyDir(ctx: Context, dir: string, opts: VerifyOptions): Promise<number> {
	const jwsFile = opts.manifest ?? path.join(dir, MANIFEST_JWS_NAME);
	if (!existsSync(jwsFile))
		throw new CliError(
			`${jwsFile}: no signed manifest here (expected ${MANIFEST_JWS_NAME} in the release folder, or pass --manifest FILE).`
		);
	const { verifyManifest, checkFilesInDir, unlistedFiles, plainManifestMatches } = await verifier();
	const { jwks, from } = await loadJwks(ctx, opts);
	const signed = await verifyManifest(readFileSync(jwsFile, 'utf8'), jwks);
	const checks = await checkFilesInDir(dir, signed.manifest, (c) => fileLine(ctx, c));
	return report(ctx, signed, checks, from, {
		unlisted: unlistedFiles(dir, signed.manifest),
		plainManifest: plainManifestMatches(dir, signed.payload)
	});
}

/** A published release on the hub: GET /api/v1/dataset/releases/{version} gives `manifest_jws`; files are streamed and hashed, not kept. */
async function verifyVersion(ctx: Context, version: string, opts: VerifyOptions): Promise<number> {
	const client = ctx.client();
	const base = `/api/v1/dataset/releases/${encodeURIComponent(version)}`;
	const info = await client.getJson<{ manifest_jws?: string }>(base);
	if (typeof info.manifest_jws !== 'string')
		throw new CliError(`the hub's answer for release ${version} holds no signed manifest (manifest_jws).`);
	const { verifyManifest, compare, hashStream } = await verifier();
	const { jwks, from } = await loadJwks(ctx, opts);
	const signed = await verifyManifest(info.manifest_jws, jwks);
	const checks: FileCheck[] = [];
	for (const f of signed.manifest.files) {
		const res = await client.request({
			path: `${base}/files/${f.name.split('/').map(encodeURIComponent).join('/')}`,
			headers: { accept: '*/*' }
		});
		const c = compare(f.name, f, await hashStream(res.body));
		await fileLine(ctx, c);
		checks.push(c);
	}
	return report(ctx, signed, checks, from, { unlisted: [], plainManifest: null });
}

export function registerRelease(program: Command, r: Registry): Command {
	const release = program.command('release').description('work with frozen dataset releases');
	release
		.command('verify')
		.description("check a release's files against its signed manifest, with only the hub's public keys")
		.argument('<dir-or-version>', 'a downloaded release folder, or a release version on the hub (e.g. 2027.1)')
		.option('--jwks <file-or-url>', 'the public key set (default: <hub>/.well-known/jwks.json)')
		.option('--manifest <file>', `the signed manifest (default: DIR/${MANIFEST_JWS_NAME})`)
		.addHelpText(
			'after',
			`
A release folder holds ${MANIFEST_JWS_NAME} (the manifest as a compact JWS: every file's
name, size and SHA-256) and the files it lists. The signature is checked with the
hub's public key set only; then every file is hashed and compared. Exit code 0 when
everything matches, 1 when anything differs, is missing, or the signature fails.

Examples:
  $ runnel release verify ./runnel-dataset-2027.1
  $ runnel release verify ./runnel-dataset-2027.1 --jwks jwks.json     (offline)
  $ runnel release verify 2027.1                                      (on the hub)`
		)
		.action(
			r.action((ctx, target, opts) => {
				const t = target as string;
				if (existsSync(t) && statSync(t).isDirectory()) return verifyDir(ctx, t, opts as VerifyOptions);
				if (/^[0-9A-Za-z][0-9A-Za-z._-]{0,63}$/.test(t) && !t.includes('/')) return verifyVersion(ctx, t, opts as VerifyOptions);
				throw new UsageError(`${t} is neither a release folder nor a release version.`);
			})
		);
	return release;
}

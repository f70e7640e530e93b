// Verifying a dataset release with only the public key set: the manifest's JWS signature, then every
// file's size and SHA-256 against the signed manifest (files are hashed as streams).
import { createHash } from 'node:crypto';
import { createReadStream, existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import type { Readable } from 'node:stream';
import { isDeepStrictEqual } from 'node:util';
import { compactVerify, createLocalJWKSet, errors as joseErrors, type JSONWebKeySet } from 'jose';
import { ReleaseManifest, RELEASE_SIGNING_ALGORITHMS, MANIFEST_JSON_FILE, MANIFEST_JWS_FILE } from '../src/lib/schema/release-manifest';
import { CliError } from './exit-codes';

export interface SignedManifest {
	manifest: ReleaseManifest;
	/** The exact signed bytes (the JWS payload). */
	payload: Uint8Array;
	alg: string;
	kid: string | null;
}

export type FileStatus = 'ok' | 'missing' | 'size-mismatch' | 'hash-mismatch';

export interface FileCheck {
	name: string;
	status: FileStatus;
	expected: { bytes: number; sha256: string };
	actual: { bytes: number; sha256: string } | null;
}

export function parseJwks(text: string, where: string): JSONWebKeySet {
	let v: unknown;
	try {
		v = JSON.parse(text);
	} catch {
		throw new CliError(`${where} is not JSON; expected a JSON Web Key Set ({"keys": [...]}).`);
	}
	if (!v || typeof v !== 'object' || !Array.isArray((v as { keys?: unknown }).keys))
		throw new CliError(`${where} is not a JSON Web Key Set ({"keys": [...]}).`);
	return v as JSONWebKeySet;
}

/** Checks the JWS with the key set and validates its payload as a release manifest. */
export async function verifyManifest(jws: string, jwks: JSONWebKeySet): Promise<SignedManifest> {
	let result;
	try {
		result = await compactVerify(jws.trim(), createLocalJWKSet(jwks), { algorithms: RELEASE_SIGNING_ALGORITHMS });
	} catch (e) {
		if (e instanceof joseErrors.JWSSignatureVerificationFailed)
			throw new CliError('the manifest signature does not verify: the manifest was changed or not signed by this hub.');
		if (e instanceof joseErrors.JWKSNoMatchingKey)
			throw new CliError("the manifest was signed with a key that is not in the hub's key set.");
		if (e instanceof joseErrors.JWSInvalid) throw new CliError(`the signed manifest is not a valid compact JWS (${(e as Error).message}).`);
		if (e instanceof joseErrors.JOSEAlgNotAllowed)
			throw new CliError(`the manifest is signed with an algorithm that is not accepted (${(e as Error).message}).`);
		throw new CliError(`the manifest signature cannot be checked: ${(e as Error).message}`);
	}
	let json: unknown;
	try {
		json = JSON.parse(new TextDecoder('utf-8', { fatal: true }).decode(result.payload));
	} catch {
		throw new CliError('the signed manifest is not UTF-8 JSON.');
	}
	const parsed = ReleaseManifest.safeParse(json);
	if (!parsed.success)
		throw new CliError(
			`the signed manifest does not have the expected shape: ${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`
		);
	return { manifest: parsed.data, payload: result.payload, alg: result.protectedHeader.alg, kid: result.protectedHeader.kid ?? null };
}

export async function hashStream(stream: Readable): Promise<{ bytes: number; sha256: string }> {
	const h = createHash('sha256');
	let bytes = 0;
	for await (const chunk of stream) {
		bytes += (chunk as Buffer).length;
		h.update(chunk as Buffer);
	}
	return { bytes, sha256: h.digest('hex') };
}

export function compare(
	name: string,
	expected: { bytes: number; sha256: string },
	actual: { bytes: number; sha256: string } | null
): FileCheck {
	const status: FileStatus = !actual
		? 'missing'
		: actual.bytes !== expected.bytes
			? 'size-mismatch'
			: actual.sha256 !== expected.sha256
				? 'hash-mismatch'
				: 'ok';
	return { name, status, expected: { bytes: expected.bytes, sha256: expected.sha256 }, actual };
}

/** Every file of the manifest, checked in `dir`. */
export async function checkFilesInDir(
	dir: string,
	manifest: ReleaseManifest,
	onFile?: (c: FileCheck) => Promise<void> | void
): Promise<FileCheck[]> {
	const out: FileCheck[] = [];
	for (const f of manifest.files) {
		const p = path.join(dir, ...f.name.split('/'));
		let actual: { bytes: number; sha256: string } | null = null;
		if (existsSync(p) && statSync(p).isFile()) actual = await hashStream(createReadStream(p));
		const c = compare(f.name, f, actual);
		await onFile?.(c);
		out.push(c);
	}
	return out;
}

/** Files in the folder that the manifest does not list (not covered by the signature). */
export function unlistedFiles(dir: string, manifest: ReleaseManifest): string[] {
	const listed = new Set([...manifest.files.map((f) => f.name), MANIFEST_JWS_FILE, MANIFEST_JSON_FILE]);
	const found: string[] = [];
	const walk = (rel: string) => {
		for (const e of readdirSync(path.join(dir, rel), { withFileTypes: true })) {
			const name = rel ? `${rel}/${e.name}` : e.name;
			if (e.isDirectory()) walk(name);
			else if (!listed.has(name)) found.push(name);
		}
	};
	walk('');
	return found.sort();
}

/** A plain manifest.json next to the JWS must say exactly what the signed payload says (layout aside). */
export function plainManifestMatches(dir: string, payload: Uint8Array): boolean | null {
	const p = path.join(dir, MANIFEST_JSON_FILE);
	if (!existsSync(p)) return null;
	try {
		return isDeepStrictEqual(JSON.parse(readFileSync(p, 'utf8')), JSON.parse(Buffer.from(payload).toString('utf8')));
	} catch {
		return false;
	}
}

// The hub's signing keys: ES256 (ECDSA P-256) key pairs kept in the database (signing_keys), used to
// sign OAuth access tokens (RFC 9068 JWTs) and, later, dataset release manifests (JWS).
//
// - The first key is generated on first use (under an advisory lock, so several app processes
//   agree on one key). Its `kid` is the RFC 7638 JWK thumbprint of the public key.
// - The private JWK never leaves the server: it is stored as a compact JWE (dir + A256GCM, key
//   derived from RUNNEL_KEY_SECRET with HKDF-SHA256) or, when no secret is configured, as plain JSON.
// - Rotation makes a new key active; the old one becomes `previous` and stays published in
//   /.well-known/jwks.json, so everything it signed keeps verifying, until it is retired.
import { hkdfSync } from 'node:crypto';
import {
	calculateJwkThumbprint,
	CompactEncrypt,
	compactDecrypt,
	CompactSign,
	compactVerify,
	errors,
	exportJWK,
	generateKeyPair,
	importJWK,
	jwtVerify,
	SignJWT,
	type CompactVerifyResult,
	type CryptoKey,
	type JWK,
	type CompactJWSHeaderParameters,
	type JWTPayload,
	type JWTVerifyOptions,
	type JWTVerifyResult
} from 'jose';
import { sql, type Kysely } from 'kysely';
import { config } from './config';
import { getDb } from './db';
import type { Database, SigningKey } from './db/schema';
import { logger } from './log';

export const SIGNING_ALG = 'ES256';

// Imported keys are kept per kid (importing is the costly part); which key is active, and whether a
// key is retired, is read from the database on every use, so a rotation or retirement by any process
// takes effect at once everywhere (one indexed lookup; tokens are issued every few minutes per client).
const privateKeys = new Map<string, CryptoKey>();
const publicKeys = new Map<string, CryptoKey>();

// --- private key at rest ------------------------------------------------------------------------
function keyEncryptionKey(secret: string): Uint8Array {
	return new Uint8Array(hkdfSync('sha256', secret, 'runnel-signing-keys', 'runnel signing key encryption v1', 32));
}

async function sealPrivateJwk(jwk: JWK): Promise<string> {
	const json = new TextEncoder().encode(JSON.stringify(jwk));
	const secret = config.keySecret;
	if (!secret) return 'plain:' + JSON.stringify(jwk);
	const jwe = await new CompactEncrypt(json)
		.setProtectedHeader({ alg: 'dir', enc: 'A256GCM', cty: 'jwk+json' })
		.encrypt(keyEncryptionKey(secret));
	return 'jwe:' + jwe;
}

async function openPrivateJwk(kid: string, stored: string): Promise<JWK> {
	if (stored.startsWith('plain:')) return JSON.parse(stored.slice('plain:'.length)) as JWK;
	if (!stored.startsWith('jwe:')) throw new Error(`signing key ${kid}: unknown storage format`);
	const secret = config.keySecret;
	if (!secret) throw new Error(`signing key ${kid} is encrypted but RUNNEL_KEY_SECRET is not set.`);
	try {
		const { plaintext } = await compactDecrypt(stored.slice('jwe:'.length), keyEncryptionKey(secret));
		return JSON.parse(new TextDecoder().decode(plaintext)) as JWK;
	} catch {
		throw new Error(`signing key ${kid} cannot be decrypted: RUNNEL_KEY_SECRET differs from the one that encrypted it.`);
	}
}

// --- key lifecycle --------------------------------------------------------------------------------
async function newKeyRow(): Promise<{ kid: string; publicJwk: JWK; sealed: string }> {
	const { publicKey, privateKey } = await generateKeyPair(SIGNING_ALG, { extractable: true });
	const publicJwk = await exportJWK(publicKey);
	const kid = await calculateJwkThumbprint(publicJwk, 'sha256');
	const privateJwk = await exportJWK(privateKey);
	return { kid, publicJwk: { ...publicJwk, kid, alg: SIGNING_ALG, use: 'sig' }, sealed: await sealPrivateJwk(privateJwk) };
}

const LOCK = sql`select pg_advisory_xact_lock(hashtext('runnel.signing_keys'))`;

/** The active key, generated on first use. */
async function loadActiveKey(db: Kysely<Database>): Promise<{ kid: string; privateKey: CryptoKey }> {
	const current = await db
		.selectFrom('signing_keys')
		.select(['kid', sql<boolean>`starts_with(private_jwk, 'plain:')`.as('plain')])
		.where('status', '=', 'active')
		.executeTakeFirst();
	if (current?.plain && config.keySecret) await sealPlainKeys(db);
	const cached = current && privateKeys.get(current.kid);
	if (current && cached) return { kid: current.kid, privateKey: cached };

	let row = await db.selectFrom('signing_keys').selectAll().where('status', '=', 'active').executeTakeFirst();
	if (!row) {
		row = await db.transaction().execute(async (tx) => {
			await LOCK.execute(tx);
			const existing = await tx.selectFrom('signing_keys').selectAll().where('status', '=', 'active').executeTakeFirst();
			if (existing) return existing;
			const k = await newKeyRow();
			logger.info({ kid: k.kid }, 'generated the first signing key');
			return tx
				.insertInto('signing_keys')
				.values({ kid: k.kid, alg: SIGNING_ALG, public_jwk: JSON.stringify(k.publicJwk), private_jwk: k.sealed, status: 'active' })
				.returningAll()
				.executeTakeFirstOrThrow();
		});
	}
	const privateKey = (await importJWK(await openPrivateJwk(row.kid, row.private_jwk), SIGNING_ALG)) as CryptoKey;
	privateKeys.set(row.kid, privateKey);
	return { kid: row.kid, privateKey };
}

/** Keys stored before RUNNEL_KEY_SECRET was configured are encrypted as soon as it is. */
async function sealPlainKeys(db: Kysely<Database>): Promise<void> {
	const plain = await db.selectFrom('signing_keys').select(['kid', 'private_jwk']).where('private_jwk', 'like', 'plain:%').execute();
	for (const r of plain) {
		const sealed = await sealPrivateJwk(await openPrivateJwk(r.kid, r.private_jwk));
		await db
			.updateTable('signing_keys')
			.set({ private_jwk: sealed })
			.where('kid', '=', r.kid)
			.where('private_jwk', '=', r.private_jwk)
			.execute();
	}
	if (plain.length > 0) logger.info({ keys: plain.length }, 'encrypted the stored signing keys with RUNNEL_KEY_SECRET');
}

/** The `kid` of the key that signs now (generating the first key if there is none). */
export async function activeKid(db: Kysely<Database> = getDb()): Promise<string> {
	return (await loadActiveKey(db)).kid;
}

/** The public JWK Set (RFC 7517 §5) of every key that is not retired: what /.well-known/jwks.json serves. */
export async function publicJwks(db: Kysely<Database> = getDb()): Promise<{ keys: JWK[] }> {
	await loadActiveKey(db); // make sure there is at least one key
	const rows = await db
		.selectFrom('signing_keys')
		.select(['kid', 'public_jwk', 'status'])
		.where('status', 'in', ['active', 'previous'])
		.orderBy(sql`status = 'active'`, 'desc')
		.orderBy('created_at', 'desc')
		.execute();
	return { keys: rows.map((r) => publicOnly(r.public_jwk as JWK, r.kid)) };
}

/** Only the public members of an EC/OKP JWK, whatever was stored. */
function publicOnly(jwk: JWK, kid: string): JWK {
	const { kty, crv, x, y } = jwk;
	return { kty, crv, x, ...(y ? { y } : {}), kid, alg: SIGNING_ALG, use: 'sig' };
}

export interface SigningKeyInfo {
	kid: string;
	alg: string;
	status: SigningKey['status'];
	createdAt: Date;
	rotatedAt: Date | null;
	retiredAt: Date | null;
	encrypted: boolean;
}

export async function listSigningKeys(db: Kysely<Database> = getDb()): Promise<SigningKeyInfo[]> {
	const rows = await db.selectFrom('signing_keys').selectAll().orderBy('created_at', 'desc').execute();
	return rows.map((r) => ({
		kid: r.kid,
		alg: r.alg,
		status: r.status,
		createdAt: r.created_at,
		rotatedAt: r.rotated_at,
		retiredAt: r.retired_at,
		encrypted: r.private_jwk.startsWith('jwe:')
	}));
}

/** Makes a new key active. The old one stays published (status `previous`) until `retireSigningKey`. */
export async function rotateSigningKey(db: Kysely<Database> = getDb()): Promise<{ kid: string; previousKid: string | null }> {
	const k = await newKeyRow();
	const previousKid = await db.transaction().execute(async (tx) => {
		await LOCK.execute(tx);
		const old = await tx
			.updateTable('signing_keys')
			.set({ status: 'previous', rotated_at: sql`now()` as unknown as Date })
			.where('status', '=', 'active')
			.returning('kid')
			.executeTakeFirst();
		await tx
			.insertInto('signing_keys')
			.values({ kid: k.kid, alg: SIGNING_ALG, public_jwk: JSON.stringify(k.publicJwk), private_jwk: k.sealed, status: 'active' })
			.execute();
		return old?.kid ?? null;
	});
	logger.info({ kid: k.kid, previousKid }, 'rotated the signing key');
	return { kid: k.kid, previousKid };
}

/**
 * Stops publishing a previous key: whatever it signed no longer verifies. Refuses the active key, and
 * (unless `force`) a key rotated out less than one access-token lifetime ago, whose tokens may still be
 * in use. Keys that signed release manifests should stay published as long as those releases are cited.
 */
export async function retireSigningKey(kid: string, opts: { force?: boolean } = {}, db: Kysely<Database> = getDb()): Promise<void> {
	const row = await db.selectFrom('signing_keys').selectAll().where('kid', '=', kid).executeTakeFirst();
	if (!row) throw new Error(`no signing key ${kid}`);
	if (row.status === 'active') throw new Error(`signing key ${kid} is active; rotate first`);
	if (row.status === 'retired') return;
	const since = row.rotated_at ? Date.now() - row.rotated_at.getTime() : Infinity;
	if (!opts.force && since < config.accessTokenTtlSeconds * 1000) {
		throw new Error(`signing key ${kid} was rotated out ${Math.round(since / 1000)} s ago; its access tokens may still be valid`);
	}
	await db
		.updateTable('signing_keys')
		.set({ status: 'retired', retired_at: sql`now()` as unknown as Date })
		.where('kid', '=', kid)
		.execute();
	logger.info({ kid }, 'retired a signing key');
}

// --- signing and verifying ------------------------------------------------------------------------
export interface SignOptions {
	/** JOSE `typ` header, e.g. `at+jwt` (RFC 9068) or `runnel-manifest+jws`. */
	typ?: string;
	/** JOSE `cty` header (content type of the payload). */
	cty?: string;
}

/** Signs bytes, a string, or a JSON value as a compact JWS (RFC 7515) with the active key. */
export async function signJws(
	payload: Uint8Array | string | object,
	opts: SignOptions = {},
	db: Kysely<Database> = getDb()
): Promise<string> {
	const key = await loadActiveKey(db);
	const bytes =
		payload instanceof Uint8Array ? payload : new TextEncoder().encode(typeof payload === 'string' ? payload : JSON.stringify(payload));
	const header: CompactJWSHeaderParameters = { alg: SIGNING_ALG, kid: key.kid };
	if (opts.typ) header.typ = opts.typ;
	if (opts.cty) header.cty = opts.cty;
	return new CompactSign(bytes).setProtectedHeader(header).sign(key.privateKey);
}

/**
 * Signs JWT claims (RFC 7519) with the active key. `expiresInSeconds` sets `exp`; `iat` is always set.
 * Other registered claims (`iss`, `aud`, `sub`, `jti`) come from `claims`.
 */
export async function signJwt(
	claims: JWTPayload,
	opts: SignOptions & { expiresInSeconds?: number } = {},
	db: Kysely<Database> = getDb()
): Promise<string> {
	const key = await loadActiveKey(db);
	const jwt = new SignJWT(claims).setProtectedHeader({ alg: SIGNING_ALG, kid: key.kid, typ: opts.typ ?? 'JWT' }).setIssuedAt();
	if (opts.expiresInSeconds !== undefined) jwt.setExpirationTime(Math.floor(Date.now() / 1000) + opts.expiresInSeconds);
	return jwt.sign(key.privateKey);
}

/** The public key for a `kid`, or null when unknown or retired. */
async function verificationKey(db: Kysely<Database>, kid: string | undefined): Promise<CryptoKey | null> {
	if (!kid || kid.length > 100) return null;
	const row = await db.selectFrom('signing_keys').select(['kid', 'public_jwk', 'status']).where('kid', '=', kid).executeTakeFirst();
	if (!row || row.status === 'retired') return null;
	let key = publicKeys.get(kid);
	if (!key) {
		key = (await importJWK(publicOnly(row.public_jwk as JWK, row.kid), SIGNING_ALG)) as CryptoKey;
		publicKeys.set(kid, key);
	}
	return key;
}

/** No published key with the token's `kid` (unknown or retired). A JOSE error, like a bad signature. */
export class UnknownKeyError extends errors.JOSEError {
	static override code = 'ERR_RUNNEL_UNKNOWN_KEY';
	override code = 'ERR_RUNNEL_UNKNOWN_KEY';
}

/** Verifies a compact JWS against our published keys; throws when the signature or key is not good. */
export async function verifyJws(jws: string, db: Kysely<Database> = getDb()): Promise<CompactVerifyResult> {
	return compactVerify(
		jws,
		async (header) => {
			const key = await verificationKey(db, header.kid);
			if (!key) throw new UnknownKeyError(`unknown or retired key ${header.kid ?? '(none)'}`);
			return key;
		},
		{ algorithms: [SIGNING_ALG] }
	);
}

/** Verifies a JWT against our published keys and the given claim checks (issuer, audience, typ…). */
export async function verifyJwt(token: string, options: JWTVerifyOptions, db: Kysely<Database> = getDb()): Promise<JWTVerifyResult> {
	return jwtVerify(
		token,
		async (header) => {
			const key = await verificationKey(db, header.kid);
			if (!key) throw new UnknownKeyError(`unknown or retired key ${header.kid ?? '(none)'}`);
			return key;
		},
		{ ...options, algorithms: [SIGNING_ALG] }
	);
}

// Pseudonymous record ids for the research dataset: HMAC-SHA-256 of the record id under a server secret.
// Stable across releases (same secret), unlinkable to the record without it. The secret comes from
// RUNNEL_DATASET_SECRET; without it, one is generated on first use and kept in the settings table (never
// served by any route). Changing the secret changes every pseudonym: treat it like a signing key.
import { createHash, createHmac, randomBytes } from 'node:crypto';
import { sql, type Kysely } from 'kysely';
import type { Database } from '../db/schema';

const SETTING = 'dataset_pseudonym_secret';
let cached: string | null = null;

async function secret(db: Kysely<Database>): Promise<string> {
	if (process.env.RUNNEL_DATASET_SECRET) return process.env.RUNNEL_DATASET_SECRET;
	if (cached) return cached;
	await db
		.insertInto('settings')
		.values({ key: SETTING, value: JSON.stringify(randomBytes(32).toString('base64url')) })
		.onConflict((oc) => oc.column('key').doNothing())
		.execute();
	const row = await db.selectFrom('settings').select('value').where('key', '=', SETTING).executeTakeFirstOrThrow();
	cached = String(row.value);
	return cached;
}

/** The keyed-hash function (hex, 64 characters) for the current secret. */
export async function pseudonymiser(db: Kysely<Database>): Promise<(recordId: string) => string> {
	const key = await secret(db);
	return (recordId: string) => createHmac('sha256', key).update(String(recordId)).digest('hex');
}

/**
 * The secret as the inner and outer HMAC-SHA-256 pads (RFC 2104, section 2: the key, hashed first when longer
 * than the 64-byte block, zero-padded and XORed with 0x36 / 0x5c), hex. With them PostgreSQL computes the same
 * pseudonym as `pseudonymiser` with its built-in sha256(): sha256(opad || sha256(ipad || id)).
 */
export async function hmacPads(db: Kysely<Database>): Promise<{ ipad: string; opad: string }> {
	let key = Buffer.from(await secret(db), 'utf8');
	if (key.length > 64) key = createHash('sha256').update(key).digest();
	const block = Buffer.alloc(64);
	key.copy(block);
	const ipad = Buffer.from(block.map((b) => b ^ 0x36));
	const opad = Buffer.from(block.map((b) => b ^ 0x5c));
	return { ipad: ipad.toString('hex'), opad: opad.toString('hex') };
}

/**
 * Hands the pseudonym key (the pads) to the rest of this transaction as local settings, so the estimate rows
 * it writes get their research-dataset pid from the record_estimates_published trigger
 * (migration 2026-12-05T0100_dataset_published).
 */
export async function carryPseudonymKey(trx: Kysely<Database>): Promise<void> {
	const { ipad, opad } = await hmacPads(trx);
	await sql`select set_config('runnel.dataset_ipad', ${ipad}, true), set_config('runnel.dataset_opad', ${opad}, true)`.execute(trx);
}

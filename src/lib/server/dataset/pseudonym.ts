// Pseudonymous record ids for the research dataset: HMAC-SHA-256 of the record id under a server secret.
// Stable across releases (same secret), unlinkable to the record without it. The secret comes from
// RUNNEL_DATASET_SECRET; without it, one is generated on first use and kept in the settings table (never
// served by any route). Changing the secret changes every pseudonym: treat it like a signing key.
import { createHmac, randomBytes } from 'node:crypto';
import type { Kysely } from 'kysely';
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

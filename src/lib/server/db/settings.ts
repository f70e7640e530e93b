// Reads hub settings (the `settings` table, seeded with defaults in seeds/reference.ts).
import type { Kysely, Transaction } from 'kysely';
import type { Database } from './schema';

export async function readSetting<T>(db: Kysely<Database> | Transaction<Database>, key: string, fallback: T): Promise<T> {
	const row = await db.selectFrom('settings').select('value').where('key', '=', key).executeTakeFirst();
	return row ? (row.value as T) : fallback;
}

export async function stateFyStartMonth(db: Kysely<Database> | Transaction<Database>): Promise<number> {
	return Number(await readSetting(db, 'state_fy_start_month', 7));
}

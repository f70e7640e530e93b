// Where the rollups get reduction methods: the methods area (src/lib/server/methods.ts) is the one
// source of truth for stored method versions and which one is active.
import type { Kysely, Transaction } from 'kysely';
import type { Database } from '../db/schema';
import type { ReductionMethod } from '$lib/domain/reduction-method';
import { getActiveMethodVersion, getMethod } from '../methods';

type Db = Kysely<Database> | Transaction<Database>;

export async function activeMethodVersion(db: Db): Promise<string | null> {
	return (await getActiveMethodVersion(db)) ?? null;
}

/** A stored method version's document, or null when no such version is stored. */
export async function loadMethod(db: Db, version: string): Promise<ReductionMethod | null> {
	return (await getMethod(db, version))?.method ?? null;
}

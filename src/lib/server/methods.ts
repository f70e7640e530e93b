// Reduction methods in the database: list, read, add a new (frozen) version, pick the active one.
// A stored version never changes, so an estimate that names its method version reproduces forever.
import type { Kysely, Transaction } from 'kysely';
import type { z } from 'zod';
import { DEFAULT_METHOD, type ReductionMethod } from '$lib/domain/reduction-method';
import { ReductionMethodSchema } from '$lib/schema/reduction-method';
import type { Database } from './db/schema';
import { ApiError, type ProblemFieldError } from './http/problem';

type Db = Kysely<Database> | Transaction<Database>;

export const ACTIVE_METHOD_SETTING = 'active_method_version';

export interface StoredMethod {
	version: string;
	label: string;
	method: ReductionMethod;
	created_by: string;
	created_at: Date;
	active: boolean;
}

export type MethodSummary = Omit<StoredMethod, 'method'>;

/** The version the settings name as active; the default method's when none is set. */
export async function getActiveMethodVersion(db: Db): Promise<string> {
	const row = await db.selectFrom('settings').select('value').where('key', '=', ACTIVE_METHOD_SETTING).executeTakeFirst();
	return typeof row?.value === 'string' ? row.value : DEFAULT_METHOD.version;
}

export async function listMethods(db: Db): Promise<MethodSummary[]> {
	const active = await getActiveMethodVersion(db);
	const rows = await db
		.selectFrom('reduction_methods')
		.select(['version', 'label', 'created_by', 'created_at'])
		.orderBy('created_at', 'desc')
		.orderBy('id', 'desc')
		.execute();
	return rows.map((r) => ({ ...r, active: r.version === active }));
}

export async function getMethod(db: Db, version: string): Promise<StoredMethod | undefined> {
	const row = await db
		.selectFrom('reduction_methods')
		.select(['version', 'label', 'method', 'created_by', 'created_at'])
		.where('version', '=', version)
		.executeTakeFirst();
	if (!row) return undefined;
	return { ...row, active: row.version === (await getActiveMethodVersion(db)) };
}

/** The active method's document (falls back to the built-in default if the stored row is missing). */
export async function getActiveMethod(db: Db): Promise<ReductionMethod> {
	const version = await getActiveMethodVersion(db);
	return (await getMethod(db, version))?.method ?? DEFAULT_METHOD;
}

/** zod issues as RFC 9457 `errors[]` members with JSON Pointers into the method document. */
export function issuesToErrors(issues: z.ZodError['issues'], prefix = ''): ProblemFieldError[] {
	return issues.map((i) => ({
		pointer: prefix + '/' + i.path.map((p) => String(p).replace(/~/g, '~0').replace(/\//g, '~1')).join('/'),
		detail: i.message
	}));
}

/** Validates a method document; throws a 422 problem listing every problem with its pointer. */
export function parseMethod(input: unknown): ReductionMethod {
	const parsed = ReductionMethodSchema.safeParse(input);
	if (!parsed.success) {
		throw new ApiError({
			status: 422,
			type: 'invalid-method',
			detail: 'The reduction method has problems; each is listed with a pointer to the value.',
			errors: issuesToErrors(parsed.error.issues)
		});
	}
	return parsed.data;
}

/** Stores a new method version. 422 when invalid, 409 when the version exists (stored versions are frozen). */
export async function createMethod(db: Kysely<Database>, input: unknown, actor: string): Promise<StoredMethod> {
	const method = parseMethod(input);
	const row = await db
		.insertInto('reduction_methods')
		.values({ version: method.version, label: method.label, method: JSON.stringify(method), created_by: actor })
		.onConflict((oc) => oc.column('version').doNothing())
		.returning(['version', 'label', 'method', 'created_by', 'created_at'])
		.executeTakeFirst();
	if (!row) {
		throw new ApiError({
			status: 409,
			type: 'method-version-exists',
			detail: `Method version ${method.version} already exists and cannot be changed; give the new table a new version.`,
			errors: [{ pointer: '/version', detail: 'already exists' }]
		});
	}
	return { ...row, active: false };
}

type ActiveMethodListener = (trx: Transaction<Database>, change: { from: string; to: string; actor: string }) => Promise<void>;
const listeners: ActiveMethodListener[] = [];

/**
 * Registers work to run, inside the same transaction, when the active method changes (the rollups area
 * refreshes stored estimates and summaries for the new version here).
 */
export function onActiveMethodChanged(listener: ActiveMethodListener): void {
	listeners.push(listener);
}

/** Makes a stored version the active one. 422 when no such version is stored. */
export async function setActiveMethod(db: Kysely<Database>, version: string, actor: string): Promise<{ from: string; to: string }> {
	return db.transaction().execute(async (trx) => {
		const exists = await trx.selectFrom('reduction_methods').select('version').where('version', '=', version).executeTakeFirst();
		if (!exists) {
			throw new ApiError({
				status: 422,
				type: 'unknown-method-version',
				detail: `No stored reduction method has version ${version}.`,
				errors: [{ pointer: '/version', detail: 'no such method version' }]
			});
		}
		// Serialise concurrent switches on the settings row.
		const current = await trx
			.selectFrom('settings')
			.select('value')
			.where('key', '=', ACTIVE_METHOD_SETTING)
			.forUpdate()
			.executeTakeFirst();
		const from = typeof current?.value === 'string' ? current.value : DEFAULT_METHOD.version;
		await trx
			.insertInto('settings')
			.values({ key: ACTIVE_METHOD_SETTING, value: JSON.stringify(version) })
			.onConflict((oc) => oc.column('key').doUpdateSet({ value: JSON.stringify(version), updated_at: new Date() }))
			.execute();
		if (from !== version) for (const l of listeners) await l(trx, { from, to: version, actor });
		return { from, to: version };
	});
}

/** API shape of a stored method (snake_case, ISO times). */
export function methodJson(m: StoredMethod | MethodSummary) {
	return {
		version: m.version,
		label: m.label,
		active: m.active,
		created_by: m.created_by,
		created_at: m.created_at.toISOString(),
		...('method' in m ? { method: m.method } : {})
	};
}

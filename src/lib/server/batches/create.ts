// Creating a batch: the upload is streamed to a temporary file (hashed, counted, size-limited), archived
// in object storage, and the batch row, its Idempotency-Key claim and its job are written in one
// transaction. The answer is 202 + Location; a worker does the checking (process.ts).
import { createHash } from 'node:crypto';
import { sql } from 'kysely';
import { EVENT_SCHEMA_VERSION, SCHEMA_VERSION } from './intake-schema';
import type { Batch } from '$lib/schema/batch';
import type { Principal } from '../auth/principal';
import { actorOf } from '../auth/principal';
import { config } from '../config';
import { getDb } from '../db';
import type { BatchMode, BatchRecordType, UploadFormat } from '../db/schema';
import { ApiError } from '../http/problem';
import { logger } from '../log';
import { writableDistrict } from '../records/access';
import { archiveKey, getObjectStore } from '../storage/object-store';
import { enqueueBatch, notifyEnqueued } from './queue';
import { receiveToTempFile } from './receive';
import { getBatchView } from './queries';
import { batchPath } from './views';

/** How long an Idempotency-Key is remembered (the draft asks for at least 24 hours; never less). */
export const IDEMPOTENCY_TTL_HOURS = Math.max(24, Number(process.env.IDEMPOTENCY_TTL_HOURS ?? 48) || 48);

export interface NewBatchInput {
	mode: BatchMode;
	/** What the file holds: practice records (default) or upkeep events. */
	recordType?: BatchRecordType;
	format: UploadFormat;
	contentType: string;
	districtCode: string | null;
	sheet: string | null;
	fileName: string | null;
	idempotencyKey: string | null;
	contentLength: number | null;
	body: ReadableStream<Uint8Array> | AsyncIterable<Uint8Array> | null;
}

export interface BatchAnswer {
	status: number;
	location: string;
	body: Batch;
	replayed: boolean;
}

const KEY_PATTERN = /^[\x21-\x7e]{1,255}$/;

/** The caller an Idempotency-Key belongs to: the person (or client) behind the credentials. */
export function idempotencyScope(p: Principal): string {
	return p.userId !== null ? `user:${p.userId}` : `${p.kind}:${p.credentialId}`;
}

export function checkIdempotencyKey(mode: BatchMode, key: string | null): void {
	if (key === null) {
		if (mode === 'check') return;
		throw new ApiError({
			status: 400,
			type: 'idempotency-key-missing',
			detail: `An Idempotency-Key header is required for mode=${mode}, so that a retried upload is never applied twice. Send a new random key (a UUID) per file, and the same key when you retry it.`,
			errors: [{ pointer: '#/header/Idempotency-Key', detail: 'required for modes all and valid' }]
		});
	}
	if (!KEY_PATTERN.test(key))
		throw new ApiError({
			status: 400,
			type: 'idempotency-key-invalid',
			detail: 'The Idempotency-Key must be 1–255 visible ASCII characters (a UUID is ideal).',
			errors: [{ pointer: '#/header/Idempotency-Key', detail: 'invalid' }]
		});
}

function fingerprintOf(districtId: number, mode: BatchMode, sheet: string | null, sha256: string, recordType: BatchRecordType): string {
	// Record batches keep the fingerprint they always had; event batches add their type.
	const parts: unknown[] = [districtId, mode, sheet ?? '', sha256];
	if (recordType !== 'records') parts.push(recordType);
	return createHash('sha256').update(JSON.stringify(parts)).digest('hex');
}

const EXTENSIONS: Record<UploadFormat, string> = { csv: 'csv', xlsx: 'xlsx', ndjson: 'ndjson', json: 'json' };

function conflictProblem(): ApiError {
	return new ApiError({
		status: 409,
		type: 'idempotency-key-in-flight',
		detail: 'A request with this Idempotency-Key is still being processed. Retry in a moment with the same key.',
		headers: { 'retry-after': '1' }
	});
}

function mismatchProblem(): ApiError {
	return new ApiError({
		status: 422,
		type: 'idempotency-key-reused',
		detail:
			'This Idempotency-Key was already used for a different request (another file, mode, sheet or district). Use a new key for a new upload.'
	});
}

type StoredKey = { fingerprint: string; response_status: number; response_location: string | null; response_body: unknown };

function replay(row: StoredKey, fingerprint: string): BatchAnswer {
	if (row.fingerprint !== fingerprint) throw mismatchProblem();
	return { status: row.response_status, location: row.response_location ?? '', body: row.response_body as Batch, replayed: true };
}

async function findKey(scope: string, key: string): Promise<StoredKey | undefined> {
	return getDb()
		.selectFrom('idempotency_keys')
		.select(['fingerprint', 'response_status', 'response_location', 'response_body'])
		.where('scope', '=', scope)
		.where('key', '=', key)
		.where('expires_at', '>', sql<Date>`now()`)
		.executeTakeFirst();
}

export async function createBatch(principal: Principal, input: NewBatchInput): Promise<BatchAnswer> {
	const db = getDb();
	checkIdempotencyKey(input.mode, input.idempotencyKey);
	const district = await writableDistrict(db, principal, input.districtCode);
	const received = await receiveToTempFile(input.body, config.maxUploadBytes, input.contentLength);
	try {
		const scope = idempotencyScope(principal);
		const recordType = input.recordType ?? 'records';
		const fingerprint = fingerprintOf(district.id, input.mode, input.sheet, received.sha256, recordType);
		if (input.idempotencyKey) {
			const existing = await findKey(scope, input.idempotencyKey);
			if (existing) return replay(existing, fingerprint);
		}

		const { id } = await sql<{ id: string }>`select nextval('batches_id_seq')::text as id`.execute(db).then((r) => r.rows[0]);
		const key = archiveKey(district.code, id, received.sha256, EXTENSIONS[input.format]);
		const store = await getObjectStore();
		await store.putFile(key, received.file, input.contentType);

		let answer: BatchAnswer | undefined;
		try {
			answer = await db.transaction().execute(async (trx) => {
				if (input.idempotencyKey) {
					// Another request holding this key right now: it is in flight → 409.
					const lock = await sql<{
						ok: boolean;
					}>`select pg_try_advisory_xact_lock(hashtextextended(${'runnel:idem:' + scope + ':' + input.idempotencyKey}, 0)) as ok`.execute(
						trx
					);
					if (!lock.rows[0].ok) throw conflictProblem();
					const existing = await trx
						.selectFrom('idempotency_keys')
						.select(['fingerprint', 'response_status', 'response_location', 'response_body', 'expires_at'])
						.where('scope', '=', scope)
						.where('key', '=', input.idempotencyKey)
						.executeTakeFirst();
					if (existing && existing.expires_at.getTime() > Date.now()) return replay(existing, fingerprint);
					if (existing)
						await trx.deleteFrom('idempotency_keys').where('scope', '=', scope).where('key', '=', input.idempotencyKey).execute();
				}
				await trx
					.insertInto('batches')
					.values({
						id,
						district_id: district.id,
						mode: input.mode,
						format: input.format,
						content_type: input.contentType,
						file_name: input.fileName,
						sheet: input.sheet,
						size_bytes: received.size,
						sha256: received.sha256,
						archive_key: key,
						schema_version: recordType === 'events' ? EVENT_SCHEMA_VERSION : SCHEMA_VERSION,
						record_type: recordType,
						actor: actorOf(principal),
						user_id: principal.userId
					})
					.execute();
				const view = (await getBatchView(trx, id))!;
				const location = batchPath(id);
				if (input.idempotencyKey) {
					// The claim: a unique (scope, key) row in the same transaction as the batch it answers for.
					await trx
						.insertInto('idempotency_keys')
						.values({
							scope,
							key: input.idempotencyKey,
							fingerprint,
							batch_id: id,
							response_status: 202,
							response_location: location,
							response_body: JSON.stringify(view),
							expires_at: sql<Date>`now() + make_interval(hours => ${IDEMPOTENCY_TTL_HOURS})` as unknown as Date
						})
						.execute();
				}
				await enqueueBatch(trx, id);
				return { status: 202, location, body: view, replayed: false };
			});
		} catch (e) {
			if (isUniqueViolation(e)) throw conflictProblem();
			throw e;
		} finally {
			if (!answer || answer.replayed) {
				// This request lost the race for its key: its copy of the file is not needed.
				store.delete(key).catch((err) => logger.warn({ err, key }, 'could not delete an unused upload'));
			}
		}
		if (!answer.replayed) notifyEnqueued();
		return answer;
	} finally {
		received.discard();
	}
}

function isUniqueViolation(e: unknown): boolean {
	return typeof e === 'object' && e !== null && (e as { code?: string }).code === '23505';
}

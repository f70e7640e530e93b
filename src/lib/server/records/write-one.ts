// PUT of one record by district and local_id, for API clients that send records one at a time: the
// same checks as a batch row, the same versioning and the same change hook.
import type { Principal } from '../auth/principal';
import { actorOf } from '../auth/principal';
import { getDb } from '../db';
import { ApiError } from '../http/problem';
import { createRecordChecker, loadCheckContext } from '../batches/intake-schema';
import { writableDistrict } from './access';
import { recordDetail } from './queries';
import { lockDistrictRecords, upsertRecords } from './upsert';
import type { Finding } from '$lib/schema/findings';
import type { RecordDetail } from '$lib/schema/record-api';

export interface PutResult {
	status: 200 | 201;
	outcome: 'created' | 'updated' | 'unchanged' | 'withdrawn';
	record: RecordDetail;
	findings: Finding[];
}

const LOCAL_ID = /^[A-Za-z0-9._-]{1,64}$/;

export async function putRecord(principal: Principal, districtCode: string, localId: string, body: unknown): Promise<PutResult> {
	const db = getDb();
	const district = await writableDistrict(db, principal, districtCode);
	if (!LOCAL_ID.test(localId))
		throw new ApiError({
			status: 400,
			type: 'invalid-local-id',
			detail: 'The local id in the path must be 1–64 letters, digits, dots, underscores or hyphens.'
		});
	if (typeof body !== 'object' || body === null || Array.isArray(body))
		throw new ApiError({ status: 400, type: 'invalid-body', detail: 'Send one practice record as a JSON object.' });
	const values = { ...(body as Record<string, unknown>) };
	if (values.local_id !== undefined && values.local_id !== null && values.local_id !== localId)
		throw new ApiError({
			status: 422,
			type: 'local-id-mismatch',
			detail: `The body's local_id (${String(values.local_id)}) differs from the one in the path (${localId}).`,
			errors: [{ pointer: '/local_id', detail: 'must match the path' }]
		});
	values.local_id = localId;

	const checker = createRecordChecker(await loadCheckContext(db, { districtId: district.id }));
	const { record, findings } = checker.row(values, 1);
	const errors = findings.filter((f) => f.severity === 'error');
	if (!record || errors.length > 0) {
		throw new ApiError({
			status: 422,
			type: 'record-invalid',
			detail: `The record has ${errors.length} error${errors.length === 1 ? '' : 's'}; nothing was saved.`,
			errors: errors.map((f) => ({ pointer: f.column ? `/${f.column}` : '', detail: f.message })),
			extra: { findings: findings.map((f) => ({ ...f, row: null, cell: null })) }
		});
	}
	const warnings = findings.filter((f) => f.severity === 'warning').map((f) => ({ ...f, row: null, cell: null }));
	return db.transaction().execute(async (trx) => {
		await lockDistrictRecords(trx, district.id);
		const res = await upsertRecords(trx, { districtId: district.id, batchId: null, actor: actorOf(principal), dryRun: false }, [
			{ record: record as unknown as Record<string, unknown>, warnings }
		]);
		const id = res.recordIds[0]!;
		const outcome = res.outcomes[0];
		const detail = await recordDetail(trx, principal, id);
		const created = outcome === 'created' || (outcome === 'withdrawn' && detail.version === 1);
		return { status: created ? 201 : 200, outcome, record: detail, findings: warnings };
	});
}

// Every case of the bad-input corpus (tests/fixtures/bad/manifest.json) sent through the API as an `all`
// batch: the answer is a 4xx problem or a finished batch with findings — never a 5xx, never a `failed`
// batch — and a batch with any error writes nothing. The exact findings per case are checked offline by
// tests/unit/bad-corpus.test.ts; here the pipeline must report the same file-level codes.
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS } from '../helpers/app';
import { caseBytes, caseRows } from '../helpers/bad-corpus';
import { allFindings, closeTestDb, count, sendBatch, waitForBatch } from '../helpers/batches';

afterAll(closeTestDb);

describe('the bad-input corpus through POST /api/v1/batches?mode=all', () => {
	it.each(caseRows())('%s %s', { timeout: 90_000 }, async (_name, _opt, c) => {
		const bytes = caseBytes(c);
		const versionsBefore = await count('select count(*) as n from record_versions');
		const res = await sendBatch(DEMO_TOKENS.district, bytes, {
			mode: 'all',
			contentType: c.content_type,
			sheet: c.sheet,
			fileName: c.file ?? `${c.generate}.${c.format}`
		});
		expect(res.status, JSON.stringify(res.body)).toBeLessThan(500);
		if (res.status !== 202) {
			expect(res.status).toBeGreaterThanOrEqual(400);
			expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
			return;
		}
		const b = await waitForBatch(DEMO_TOKENS.district, res.body.id, undefined, 90_000);
		expect(b.status, b.failure ?? '').toBe('done');
		const findings = await allFindings(DEMO_TOKENS.district, b.id);
		const fileCodes = findings.filter((f) => f.row === null).map((f) => f.code);
		for (const code of c.file_codes) expect(fileCodes, c.covers).toContain(code);
		const written = await count('select count(*) as n from record_versions where batch_id = $1', [b.id]);
		if (b.counts.errors > 0) {
			// All or nothing: an error anywhere leaves no trace in the records.
			expect(b.committed).toBe(false);
			expect(b.counts.accepted).toBe(0);
			expect(written).toBe(0);
			expect(await count('select count(*) as n from record_versions')).toBe(versionsBefore);
		} else {
			expect(b.counts.rows).toBe(c.accepted);
			expect(written).toBe(b.counts.created + b.counts.updated + b.counts.withdrawn);
		}
	});
});

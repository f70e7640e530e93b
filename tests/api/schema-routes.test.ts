// The record schema's public endpoints: JSON Schema, templates, the OpenAPI document and Swagger UI.
import ExcelJS from 'exceljs';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { PRACTICE_RECORD_COLUMNS, SCHEMA_VERSION } from '$lib/schema/practice-record';
import { buildOpenApiDocument } from '$lib/schema/openapi';
import { appHandler } from '../helpers/app';

const binary = (res: request.Response, cb: (err: Error | null, body: Buffer) => void) => {
	const chunks: Buffer[] = [];
	res.on('data', (c: Buffer) => chunks.push(c));
	res.on('end', () => cb(null, Buffer.concat(chunks)));
};

describe('record schema endpoints (public)', () => {
	it('GET /api/v1/schema/practice-record.json is the JSON Schema 2020-12 with $id and version', async () => {
		const res = await request(await appHandler()).get('/api/v1/schema/practice-record.json');
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toMatch(/^application\/schema\+json/);
		const schema = JSON.parse(res.text);
		expect(schema.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
		expect(schema.$id).toBe(`urn:runnel:schema:practice-record:v${SCHEMA_VERSION}`);
		expect(schema.version).toBe(SCHEMA_VERSION);
		expect(Object.keys(schema.properties)).toEqual(PRACTICE_RECORD_COLUMNS);
		expect(schema.required).toEqual(['local_id', 'practice_code', 'county_fips', 'installed_on']);
	});

	it('GET /api/v1/schema/practice-record.csv is the header row, as an attachment', async () => {
		const res = await request(await appHandler()).get('/api/v1/schema/practice-record.csv');
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toMatch(/^text\/csv/);
		expect(res.headers['content-disposition']).toMatch(/attachment; filename="runnel-practice-records-v1\.csv"/);
		expect(res.text).toBe(`${PRACTICE_RECORD_COLUMNS.join(',')}\r\n`);
	});

	it("GET /api/v1/schema/practice-record.xlsx is a workbook with the hub state's counties in its drop-down list", async () => {
		const res = await request(await appHandler())
			.get('/api/v1/schema/practice-record.xlsx')
			.buffer(true)
			.parse(binary);
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(res.body as unknown as ArrayBuffer);
		expect(wb.worksheets.map((w) => w.name)).toEqual(['Records', 'Columns', 'Lists']);
		const lists = wb.getWorksheet('Lists')!;
		const fips: string[] = [];
		lists.getColumn(4).eachCell((c, row) => void (row > 1 && fips.push(String(c.value))));
		// the demo hub is Iowa (FIPS 19): 99 counties (Census, 2017)
		expect(fips).toHaveLength(99);
		expect(fips.every((f) => f.startsWith('19'))).toBe(true);
	});

	it('GET /api/v1/openapi.json serves the same document as the committed openapi/openapi.json generator', async () => {
		const res = await request(await appHandler()).get('/api/v1/openapi.json');
		expect(res.status).toBe(200);
		expect(res.body.openapi).toBe('3.1.0');
		expect(res.body).toEqual(JSON.parse(JSON.stringify(buildOpenApiDocument())));
		expect(Object.keys(res.body.paths)).toEqual(
			expect.arrayContaining(['/api/v1/health', '/api/v1/me', '/api/v1/schema/practice-record.json'])
		);
	});

	it('GET /api/docs is an HTML page with no inline script, loading Swagger UI from our own origin', async () => {
		const res = await request(await appHandler()).get('/api/docs');
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toMatch(/^text\/html/);
		const scripts = [...res.text.matchAll(/<script([^>]*)>([\s\S]*?)<\/script>/g)];
		expect(scripts.length).toBe(2);
		for (const [, attrs, body] of scripts) {
			expect(attrs).toMatch(/src="\/api\/docs\//);
			expect(body.trim()).toBe('');
		}
		expect(res.text).not.toMatch(/https?:\/\//);
		expect(res.text).not.toMatch(/<style|style=/);
	});

	it('serves the Swagger UI files and our initializer, and nothing else from that folder', async () => {
		const app = await appHandler();
		const css = await request(app).get('/api/docs/swagger-ui.css');
		expect(css.status).toBe(200);
		expect(css.headers['content-type']).toMatch(/^text\/css/);
		const js = await request(app).get('/api/docs/swagger-ui-bundle.js');
		expect(js.status).toBe(200);
		expect(js.headers['content-type']).toMatch(/^text\/javascript/);
		const init = await request(app).get('/api/docs/swagger-initializer.js');
		expect(init.text).toContain("url: '/api/v1/openapi.json'");
		expect(init.text).toContain('validatorUrl: null');
		for (const bad of ['package.json', 'index.html', '..%2Fpackage.json', 'swagger-ui.js']) {
			const r = await request(app).get(`/api/docs/${bad}`);
			expect(r.status, bad).toBe(404);
			expect(r.headers['content-type']).toMatch(/^application\/problem\+json/);
		}
	});

	it('GET /schema is a public page listing every column', async () => {
		const res = await request(await appHandler()).get('/schema');
		expect(res.status).toBe(200);
		for (const c of PRACTICE_RECORD_COLUMNS) expect(res.text).toContain(`id="column-${c}"`);
		expect(res.text).toContain('/api/v1/schema/practice-record.xlsx');
	});
});

// The rollups route registers with zod-to-openapi the way the API's registry expects (OpenAPI 3.1).
import { extendZodWithOpenApi, OpenAPIRegistry, OpenApiGeneratorV31 } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { describe, expect, it } from 'vitest';
import { registerRollupsOpenApi } from '$lib/schema/rollups';

extendZodWithOpenApi(z);

describe('rollups in OpenAPI', () => {
	it('documents GET /api/v1/rollups with its query, JSON/CSV/XLSX answers, 202 and problems', () => {
		const registry = new OpenAPIRegistry();
		registerRollupsOpenApi(registry);
		const doc = new OpenApiGeneratorV31(registry.definitions).generateDocument({ openapi: '3.1.0', info: { title: 't', version: '1' } });
		const get = doc.paths?.['/api/v1/rollups']?.get;
		expect(get).toBeDefined();
		expect((get!.parameters as Array<{ name?: string }>).map((p) => p.name).sort()).toEqual(
			['basis', 'county', 'district', 'format', 'fy', 'fy_basis', 'group', 'method', 'practice'].sort()
		);
		expect(Object.keys(get!.responses!)).toEqual(expect.arrayContaining(['200', '202', '400', '401', '403', '404']));
		const ok = get!.responses!['200'] as { content: Record<string, unknown> };
		expect(Object.keys(ok.content)).toEqual([
			'application/json',
			'text/csv',
			'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'
		]);
		expect(doc.components?.schemas?.RollupResponse).toBeDefined();
		expect(doc.components?.schemas?.RollupPending).toBeDefined();
	});
});

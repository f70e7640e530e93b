// `npm run openapi` writes the document; `--check` fails on a stale file (CI relies on it).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { buildOpenApiDocument } from '../../src/lib/schema/openapi';

const ROOT = path.resolve(import.meta.dirname, '..', '..');
const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-openapi-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const script = (...args: string[]) =>
	spawnSync(process.execPath, ['--import', 'tsx', path.join(ROOT, 'scripts', 'openapi.ts'), ...args], { cwd: ROOT, encoding: 'utf8' });

describe('scripts/openapi.ts', { timeout: 60_000 }, () => {
	const file = path.join(dir, 'openapi.json');

	it('writes the generated document', () => {
		const r = script('--out', file);
		expect(r.status).toBe(0);
		expect(JSON.parse(readFileSync(file, 'utf8'))).toEqual(JSON.parse(JSON.stringify(buildOpenApiDocument())));
	});

	it('--check passes on a current file and fails (exit 1) on a stale or missing one', () => {
		expect(script('--check', '--out', file).status).toBe(0);
		const doc = JSON.parse(readFileSync(file, 'utf8'));
		doc.info.version = '0.0.0-stale';
		writeFileSync(file, JSON.stringify(doc, null, '\t') + '\n');
		const stale = script('--check', '--out', file);
		expect(stale.status).toBe(1);
		expect(stale.stderr).toContain('out of date');
		expect(script('--check', '--out', path.join(dir, 'missing.json')).status).toBe(1);
	});

	it('the committed openapi/openapi.json is current', () => {
		expect(script('--check').status).toBe(0);
	});
});

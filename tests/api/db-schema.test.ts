// The hand-written `Database` interface (src/lib/server/db/schema.ts) must match the migrated schema:
// the test reads the interface with the TypeScript compiler and compares it with information_schema.
import path from 'node:path';
import pg from 'pg';
import ts from 'typescript';
import { afterAll, describe, expect, it } from 'vitest';
import { ROOT } from '../helpers/app';

function interfaceColumns(): Map<string, { columns: Set<string>; nullable: Set<string> }> {
	const file = path.join(ROOT, 'src/lib/server/db/schema.ts');
	const program = ts.createProgram([file], { strict: true, skipLibCheck: true });
	const source = program.getSourceFile(file)!;
	const interfaces = new Map<string, ts.InterfaceDeclaration>();
	source.forEachChild((n) => {
		if (ts.isInterfaceDeclaration(n)) interfaces.set(n.name.text, n);
	});
	const dbIface = interfaces.get('Database');
	if (!dbIface) throw new Error('no Database interface');
	const out = new Map<string, { columns: Set<string>; nullable: Set<string> }>();
	for (const m of dbIface.members) {
		if (!ts.isPropertySignature(m) || !m.type || !ts.isTypeReferenceNode(m.type)) continue;
		const table = (m.name as ts.Identifier).text;
		const iface = interfaces.get(m.type.typeName.getText(source));
		if (!iface) throw new Error(`no interface for table ${table}`);
		const columns = new Set<string>();
		const nullable = new Set<string>();
		for (const c of iface.members) {
			if (!ts.isPropertySignature(c) || !c.type) continue;
			const name = (c.name as ts.Identifier).text;
			columns.add(name);
			if (/\|\s*null\b/.test(c.type.getText(source))) nullable.add(name);
		}
		out.set(table, { columns, nullable });
	}
	return out;
}

const client = new pg.Client({ connectionString: process.env.DATABASE_URL });
afterAll(() => client.end());

describe('Database interface vs the migrated schema', () => {
	it('has exactly the tables and columns of the database, with matching nullability', async () => {
		await client.connect();
		const { rows } = await client.query<{ table_name: string; column_name: string; is_nullable: string }>(
			`select table_name, column_name, is_nullable from information_schema.columns
			 where table_schema = 'public' and table_name not like 'kysely_%'`
		);
		const db = new Map<string, Map<string, boolean>>();
		for (const r of rows) {
			if (!db.has(r.table_name)) db.set(r.table_name, new Map());
			db.get(r.table_name)!.set(r.column_name, r.is_nullable === 'YES');
		}
		const iface = interfaceColumns();
		expect([...iface.keys()].sort()).toEqual([...db.keys()].sort());
		for (const [table, cols] of db) {
			const decl = iface.get(table)!;
			expect([...decl.columns].sort(), `columns of ${table}`).toEqual([...cols.keys()].sort());
			for (const [col, isNullable] of cols) {
				expect(decl.nullable.has(col), `nullability of ${table}.${col}`).toBe(isNullable);
			}
		}
	});
});

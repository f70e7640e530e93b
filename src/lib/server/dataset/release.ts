// Frozen research dataset releases. Publishing reads the dataset once inside a repeatable-read transaction
// (one consistent snapshot), writes CSV, NDJSON and XLSX side by side as it streams, adds the data
// dictionary and a README, uploads every file to object storage under releases/<version>/, and signs a
// manifest (every file with its bytes and SHA-256) as a compact JWS with the server's key (keys.ts; public
// key at /.well-known/jwks.json). Releases are never changed; a withdrawn release stays listed with its reason.
import { createHash } from 'node:crypto';
import { createReadStream, createWriteStream, type WriteStream } from 'node:fs';
import { mkdtemp, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { once } from 'node:events';
import ExcelJS from 'exceljs';
import type { Kysely } from 'kysely';
import { sql } from 'kysely';
import { DATASET_COLUMNS } from '../../domain/anonymise';
import { HubReleaseManifest, MANIFEST_JSON_FILE, MANIFEST_JWS_FILE } from '../../schema/release-manifest';
import { dataDictionary } from '../../schema/dataset';
import type { Database } from '../db/schema';
import { ApiError } from '../http/problem';
import { signJws } from '../keys';
import { logger } from '../log';
import { queueMail } from '../mail/queue';
import { getObjectStore } from '../storage/object-store';
import { csvHeader, csvLines, ndjsonLines } from './encode';
import { datasetContext, datasetRows, fillPids, kyselyExec, prepare } from './source';

export const MANIFEST_TYP = 'runnel-manifest+jws';

// The manifest's shape is src/lib/schema/release-manifest.ts (shared with `runnel release verify`).
export type ReleaseManifest = HubReleaseManifest;
type ManifestFile = HubReleaseManifest['files'][number];

const MEDIA: Record<string, string> = {
	'dataset.csv': 'text/csv; charset=utf-8',
	'dataset.ndjson': 'application/x-ndjson',
	'dataset.xlsx': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
	'data-dictionary.json': 'application/json',
	'data-dictionary.csv': 'text/csv; charset=utf-8',
	'README.md': 'text/markdown; charset=utf-8'
};
export const RELEASE_FILES = Object.keys(MEDIA);

export const objectKey = (version: string, name: string) => `releases/${version}/${name}`;

async function write(ws: WriteStream, text: string): Promise<void> {
	if (!ws.write(text)) await once(ws, 'drain');
}
async function close(ws: WriteStream): Promise<void> {
	ws.end();
	await once(ws, 'finish');
}

async function sha256File(file: string): Promise<string> {
	const h = createHash('sha256');
	for await (const chunk of createReadStream(file)) h.update(chunk as Buffer);
	return h.digest('hex');
}

export function citation(version: string, publishedAt: string, origin: string): string {
	const year = publishedAt.slice(0, 4);
	return `Runnel state conservation practice hub (${year}). Anonymised conservation practice records, release ${version} [data set]. ${origin}/api/v1/dataset/releases/${version}`;
}

export function releaseReadme(m: Omit<ReleaseManifest, 'files'>, notes: string, origin: string): string {
	const s = m.small_cells;
	return [
		`# Runnel research dataset, release ${m.version}`,
		'',
		`Published ${m.published_at}. ${m.row_count} practice records (one row each), estimates under reduction method ${m.method_version}.`,
		'',
		notes ? `## Notes\n\n${notes}\n` : '',
		'## Suggested citation',
		'',
		citation(m.version, m.published_at, origin),
		'',
		'## What was done to protect producers',
		'',
		'No names, contacts, local ids, field or operation ids, coordinates, exact dates, notes or per-record costs.',
		'Record ids are keyed hashes; dates are year and month; location is county (or coarser) and HUC-8;',
		'credited acres are rounded (whole acres below 100, 5 acres from 100 up) and estimates scaled to them.',
		'',
		`Small cells (county × fiscal year of installation × practice, fewer than k = ${s.k} distinct operations,`,
		`or one operation holding more than ${Math.round(s.dominance * 100)} % of the acres):`,
		'',
		`| cells | published as county | generalised to region | generalised to state | suppressed (records) | dominated | HUC-8 withheld |`,
		`| --- | --- | --- | --- | --- | --- | --- |`,
		`| ${s.cells} | ${s.published_as_county} | ${s.generalised_to_region} | ${s.generalised_to_state} | ${s.suppressed} (${s.suppressed_records}) | ${s.dominated} | ${s.huc8_withheld} |`,
		'',
		'## Files and verification',
		'',
		'`manifest.json` lists every file with its size and SHA-256; `manifest.jws` is that manifest signed (ES256) with',
		`the hub's key, published at ${origin}/.well-known/jwks.json. Verify the JWS, then compare each file's SHA-256.`,
		'The column meanings are in data-dictionary.csv / .json.',
		''
	].join('\n');
}

export async function listReleases(db: Kysely<Database>) {
	return db
		.selectFrom('dataset_releases')
		.select([
			'version',
			'status',
			'notes',
			'method_version',
			'row_count',
			'small_cells',
			'published_at',
			'withdrawn_reason',
			'withdrawn_at'
		])
		.orderBy('published_at', 'desc')
		.execute();
}

export async function getRelease(db: Kysely<Database>, version: string) {
	const row = await db.selectFrom('dataset_releases').selectAll().where('version', '=', version).executeTakeFirst();
	if (!row) throw new ApiError({ status: 404, type: 'not-found', detail: `There is no release ${version}.` });
	return row;
}

/** Builds, stores, signs and records a release; mails the researchers. */
export async function publishRelease(
	db: Kysely<Database>,
	input: { version: string; notes: string; actor: string; origin: string }
): Promise<ReleaseManifest> {
	const exists = await db.selectFrom('dataset_releases').select('version').where('version', '=', input.version).executeTakeFirst();
	if (exists)
		throw new ApiError({
			status: 409,
			type: 'release-exists',
			detail: `Release ${input.version} exists; releases never change. Use the next version.`
		});
	const dir = await mkdtemp(path.join(tmpdir(), 'runnel-release-'));
	try {
		const published_at = new Date().toISOString();
		await fillPids(db);
		const { ctx, rowCount } = await db
			.transaction()
			.setIsolationLevel('repeatable read')
			.execute(async (trx) => {
				const ctx = await datasetContext(trx);
				await prepare(kyselyExec(trx), ctx);
				const csv = createWriteStream(path.join(dir, 'dataset.csv'));
				const nd = createWriteStream(path.join(dir, 'dataset.ndjson'));
				const wb = new ExcelJS.stream.xlsx.WorkbookWriter({
					filename: path.join(dir, 'dataset.xlsx'),
					useStyles: false,
					useSharedStrings: false
				});
				const ws = wb.addWorksheet('dataset');
				ws.columns = DATASET_COLUMNS.map((c) => ({ header: c, key: c }));
				await write(csv, csvHeader());
				let rowCount = 0;
				let buf = [];
				for await (const row of datasetRows(kyselyExec(trx), ctx)) {
					rowCount++;
					ws.addRow(row).commit();
					buf.push(row);
					if (buf.length >= 1000) {
						await write(csv, csvLines(buf));
						await write(nd, ndjsonLines(buf));
						buf = [];
					}
				}
				if (buf.length) {
					await write(csv, csvLines(buf));
					await write(nd, ndjsonLines(buf));
				}
				ws.commit();
				await wb.commit();
				await close(csv);
				await close(nd);
				return { ctx, rowCount };
			});
		const dict = dataDictionary();
		await writeFile(path.join(dir, 'data-dictionary.json'), JSON.stringify(dict, null, 2) + '\n');
		const { stringify } = await import('csv-stringify/sync');
		await writeFile(
			path.join(dir, 'data-dictionary.csv'),
			stringify([
				['column', 'type', 'nullable', 'unit', 'description', 'values'],
				...dict.map((d) => [d.column, d.type, String(d.nullable), d.unit ?? '', d.description, (d.values ?? []).join('|')])
			])
		);
		const head = { version: input.version, published_at, method_version: ctx.methodVersion, row_count: rowCount, small_cells: ctx.counts };
		await writeFile(path.join(dir, 'README.md'), releaseReadme(head, input.notes, input.origin));
		const files: ManifestFile[] = [];
		for (const name of RELEASE_FILES) {
			const file = path.join(dir, name);
			files.push({ name, media_type: MEDIA[name], bytes: (await stat(file)).size, sha256: await sha256File(file) });
		}
		// Validated against the shared schema before it is signed: what the CLI verifies is what we write.
		const manifest: ReleaseManifest = HubReleaseManifest.parse({ ...head, files });
		const manifestText = JSON.stringify(manifest, null, 2) + '\n';
		const jws = await signJws(new TextEncoder().encode(manifestText), { typ: MANIFEST_TYP, cty: 'json' }, db);
		await writeFile(path.join(dir, MANIFEST_JSON_FILE), manifestText);
		await writeFile(path.join(dir, MANIFEST_JWS_FILE), jws);
		const store = await getObjectStore();
		for (const name of [...RELEASE_FILES, MANIFEST_JSON_FILE, MANIFEST_JWS_FILE]) {
			await store.putFile(
				objectKey(input.version, name),
				path.join(dir, name),
				MEDIA[name] ?? (name.endsWith('.jws') ? 'application/jose' : 'application/json')
			);
		}
		await db.transaction().execute(async (trx) => {
			await trx
				.insertInto('dataset_releases')
				.values({
					version: input.version,
					status: 'published',
					notes: input.notes,
					method_version: ctx.methodVersion,
					row_count: rowCount,
					small_cells: JSON.stringify(ctx.counts),
					manifest: manifestText,
					manifest_jws: jws,
					published_by: input.actor,
					published_at: new Date(published_at)
				})
				.execute();
			const researchers = await trx
				.selectFrom('users')
				.select('email')
				.where('role', '=', 'researcher')
				.where('active', '=', true)
				.where('release_mail_opt_out', '=', false)
				.execute();
			for (const r of researchers) {
				await queueMail(trx, {
					kind: 'release-published',
					to: [r.email],
					subject: `Runnel research dataset ${input.version} is published`,
					text:
						`Release ${input.version} of the anonymised research dataset is published (${rowCount} records, method ${ctx.methodVersion}).\n\n` +
						(input.notes ? `${input.notes}\n\n` : '') +
						`Manifest and files: ${input.origin}/api/v1/dataset/releases/${input.version}\nHow to verify a release: ${input.origin}/dataset\n\n` +
						`You get this because you have a researcher account; turn these e-mails off on ${input.origin}/account.`
				});
			}
		});
		logger.info({ version: input.version, rows: rowCount }, 'published a dataset release');
		return manifest;
	} finally {
		await rm(dir, { recursive: true, force: true });
	}
}

export async function withdrawRelease(db: Kysely<Database>, version: string, reason: string): Promise<void> {
	const res = await db
		.updateTable('dataset_releases')
		.set({ status: 'withdrawn', withdrawn_reason: reason, withdrawn_at: sql`now()` as unknown as Date })
		.where('version', '=', version)
		.where('status', '=', 'published')
		.executeTakeFirst();
	if (Number(res.numUpdatedRows) === 0) {
		await getRelease(db, version);
		throw new ApiError({ status: 409, type: 'already-withdrawn', detail: `Release ${version} is already withdrawn.` });
	}
}

// The research dataset paths: the live anonymised records and the frozen, signed releases.
import { z } from 'zod';
import { CreateRelease, DatasetRowSchema, WithdrawRelease } from '../dataset';
import { HubReleaseManifest, ReleaseSmallCells } from '../release-manifest';
import { ProblemSchema, problems } from './common';
import { needsToken, registry } from './registry';

const Row = registry.register('DatasetRow', DatasetRowSchema.meta({ description: 'One anonymised practice record.' }));
const SmallCells = registry.register(
	'DatasetSmallCells',
	ReleaseSmallCells.meta({
		description:
			'What the small-cell rule did: cells (county × FY of installation × practice) published as county, generalised to the region or the state, suppressed (and their records), failing only on dominance, and county rows whose HUC-8 was withheld.'
	})
);
const Manifest = registry.register(
	'DatasetReleaseManifest',
	HubReleaseManifest.extend({ small_cells: SmallCells }).meta({
		description:
			'The release manifest exactly as signed: every file with its media type, size and SHA-256. `manifest.jws` is this document (the bytes of `manifest.json`) as a compact JWS (ES256, `typ` `runnel-manifest+jws`); the key is in `/.well-known/jwks.json`.'
	})
);
const Page = registry.register(
	'DatasetPage',
	z
		.object({
			data: z.array(Row),
			next: z.string().nullable().meta({ description: 'The next page, or null on the last.' }),
			method_version: z.string(),
			small_cells: SmallCells
		})
		.meta({ description: 'A page of the live dataset.' })
);
const status = z.enum(['published', 'withdrawn']);
const ReleaseSummary = registry.register(
	'DatasetRelease',
	z
		.object({
			version: z.string(),
			status,
			notes: z.string(),
			method_version: z.string(),
			row_count: z.number().int(),
			small_cells: SmallCells,
			published_at: z.iso.datetime(),
			withdrawn_reason: z.string().nullable(),
			withdrawn_at: z.iso.datetime().nullable(),
			links: z.object({ self: z.string() })
		})
		.meta({ description: 'A release in the list (withdrawn ones stay listed with their reason).' })
);
const ReleaseDetail = registry.register(
	'DatasetReleaseDetail',
	z
		.object({
			version: z.string(),
			status,
			notes: z.string(),
			published_at: z.iso.datetime(),
			withdrawn_reason: z.string().nullable(),
			withdrawn_at: z.iso.datetime().nullable(),
			manifest: Manifest,
			manifest_jws: z.string().meta({ description: 'The signed manifest (compact JWS).' }),
			files: z.array(z.object({ name: z.string(), media_type: z.string(), bytes: z.number().int(), sha256: z.string(), href: z.string() })),
			jwks: z.string().meta({ description: 'Where the public key set is.' })
		})
		.meta({ description: 'One release: status, notes, manifest and its signature, file links.' })
);

const rateHeaders = {
	'RateLimit-Limit': { description: 'Requests allowed per window for this token.', schema: { type: 'integer' as const } },
	'RateLimit-Remaining': { description: 'Requests left in this window.', schema: { type: 'integer' as const } },
	'RateLimit-Reset': { description: 'Seconds until the window starts again.', schema: { type: 'integer' as const } }
};
const tooMany = {
	description: 'Too many requests for this token; wait `Retry-After` seconds.',
	headers: { 'Retry-After': { description: 'Seconds to wait.', schema: { type: 'integer' as const } } },
	content: { 'application/problem+json': { schema: ProblemSchema } }
};
const versionParam = z.object({ version: z.string().meta({ description: 'A release version, e.g. `2027.1`.', example: '2027.1' }) });

registry.registerPath({
	method: 'get',
	path: '/api/v1/dataset/records',
	tags: ['Research dataset'],
	summary: 'The live anonymised dataset',
	description: [
		'One row per practice record installed or in service, anonymised (see the `DatasetRow` columns): no names, contacts, local ids, field or operation ids, coordinates, exact dates, notes or costs.',
		'',
		'The small-cell rule is decided on the whole dataset, never on the filtered part: a county × FY of installation × practice cell with fewer than k distinct operations is generalised to the region or the state, or left out.',
		'',
		'`format=csv` or `ndjson` (or the matching `Accept`) streams every matching row; `json` (default) answers pages with a `next` link. Rate-limited per token.'
	].join('\n'),
	security: needsToken('dataset:read'),
	request: {
		query: z.object({
			fy: z.string().optional().meta({ description: 'In service during this state FY (`2026`) or any FY of a range (`2024..2026`).' }),
			practice: z.string().optional().meta({ description: 'A practice code, e.g. `605`.' }),
			county: z.string().optional().meta({ description: 'A 5-digit county FIPS code (rows generalised above county never match).' }),
			format: z.enum(['json', 'csv', 'ndjson']).optional(),
			limit: z.string().optional().meta({ description: 'JSON: rows per page (default 100, at most 1000).' }),
			cursor: z.string().optional().meta({ description: 'JSON: the opaque position from a `next` link.' })
		})
	},
	responses: {
		200: {
			description: 'The rows. CSV and NDJSON are streamed whole.',
			headers: rateHeaders,
			content: {
				'application/json': { schema: Page },
				'text/csv': { schema: z.string().meta({ description: 'Header row with the `DatasetRow` columns, then one row per record.' }) },
				'application/x-ndjson': { schema: z.string().meta({ description: 'One `DatasetRow` JSON object per line.' }) }
			}
		},
		400: problems[400],
		401: problems[401],
		403: problems[403],
		429: tooMany
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/dataset/releases',
	tags: ['Research dataset'],
	summary: 'List the releases',
	security: needsToken('dataset:read'),
	responses: {
		200: {
			description: 'Every release, newest first.',
			content: { 'application/json': { schema: z.object({ data: z.array(ReleaseSummary) }) } }
		},
		401: problems[401],
		403: problems[403]
	}
});

registry.registerPath({
	method: 'post',
	path: '/api/v1/dataset/releases',
	tags: ['Research dataset'],
	summary: 'Publish a release (managers and administrators)',
	description:
		'Freezes the dataset as it is now: CSV, NDJSON and XLSX, the data dictionary (JSON, CSV), a README with the citation and the small-cell counts, all written to object storage, and a manifest signed with the hub’s key. Researchers who have not opted out get an e-mail. A version is never reused (409).',
	security: needsToken('dataset:read'),
	request: { body: { required: true, content: { 'application/json': { schema: CreateRelease } } } },
	responses: {
		201: {
			description: 'Published; `Location` is the release.',
			headers: { Location: { description: '/api/v1/dataset/releases/{version}', schema: { type: 'string' } } },
			content: { 'application/json': { schema: Manifest } }
		},
		400: problems[400],
		401: problems[401],
		403: problems[403],
		409: problems[409],
		422: problems[422]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/dataset/releases/{version}',
	tags: ['Research dataset'],
	summary: 'One release: manifest and signature',
	security: needsToken('dataset:read'),
	request: { params: versionParam },
	responses: {
		200: { description: 'The release.', content: { 'application/json': { schema: ReleaseDetail } } },
		401: problems[401],
		403: problems[403],
		404: problems[404]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/dataset/releases/{version}/files/{name}',
	tags: ['Research dataset'],
	summary: 'Download one file of a release',
	description:
		'Streamed from object storage: `dataset.csv`, `dataset.ndjson`, `dataset.xlsx`, `data-dictionary.json`, `data-dictionary.csv`, `README.md`, `manifest.json`, `manifest.jws`. A withdrawn release still serves its files, with a `Warning` header.',
	security: needsToken('dataset:read'),
	request: {
		params: versionParam.extend({ name: z.string().meta({ description: 'A file name from the manifest.', example: 'dataset.csv' }) })
	},
	responses: {
		200: {
			description: 'The file, byte for byte as signed.',
			content: { 'application/octet-stream': { schema: z.string().meta({ format: 'binary' }) } }
		},
		401: problems[401],
		403: problems[403],
		404: problems[404]
	}
});

registry.registerPath({
	method: 'post',
	path: '/api/v1/dataset/releases/{version}/withdraw',
	tags: ['Research dataset'],
	summary: 'Withdraw a release (managers and administrators)',
	description: 'The release stays listed, with its files, as withdrawn with the reason.',
	security: needsToken('dataset:read'),
	request: { params: versionParam, body: { required: true, content: { 'application/json': { schema: WithdrawRelease } } } },
	responses: {
		200: {
			description: 'Withdrawn.',
			content: {
				'application/json': {
					schema: z.object({ version: z.string(), status, withdrawn_reason: z.string(), withdrawn_at: z.iso.datetime() })
				}
			}
		},
		401: problems[401],
		403: problems[403],
		404: problems[404],
		409: problems[409],
		422: problems[422]
	}
});

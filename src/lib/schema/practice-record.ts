// The practice record, schema version 1: the ONE source of the columns districts send (CSV header =
// JSON property = XLSX header). The JSON Schema, the OpenAPI component, the CSV/XLSX templates, the
// data dictionary page and the record checker are all generated from or driven by this module.
// Pure: runs in the browser, on the server and in the CLI (relative imports only).
import { z } from 'zod';
import { PRACTICE_CATALOG, PRACTICE_CODES } from '../domain/practice-catalog';
import { optionalColumnsMask, readColumnMeta, withColumnMeta, type BaseColumnInfo, type BaseMeta } from './column-schema';

export const SCHEMA_VERSION = '1';

/** The practice codes whose extra detail columns only make sense for that practice. */
export const BIOREACTOR_CODE = '605';
export const COVER_CROP_CODE = '340';
export const DRAINAGE_WATER_MANAGEMENT_CODE = '554';

/**
 * Woodchip porosity the design checks assume when `media_porosity` is absent (the intake issue's
 * default). Published woodchip porosities run 0.66–0.78 depending on packing: Christianson, Bhandari &
 * Helmers, 2010, Applied Engineering in Agriculture 26(5):849–854. The record itself keeps null.
 */
export const DEFAULT_MEDIA_POROSITY = 0.7;

export const COLUMN_GROUPS = {
	record: 'The record',
	location: 'Where',
	extent: 'How much land it treats',
	farm: 'Farm and field keys',
	cost: 'Cost and funding',
	bioreactor: 'Bioreactor details (practice 605)',
	practice_details: 'Other practice details',
	notes: 'Notes'
} as const;
export type ColumnGroup = keyof typeof COLUMN_GROUPS;

export type { ColumnKind } from './column-schema';

/** When a value must be present. `per-practice`: required by the practice's credited basis. */
export type Requirement = 'always' | 'per-practice' | 'when-withdrawn' | 'optional';

export interface ColumnInfo extends BaseColumnInfo<ColumnGroup, Requirement> {
	/** Personal information (a person's name or exact location): redacted in findings, never published. */
	personal: boolean;
	/** False: never leaves the hub in the anonymised research dataset. */
	published: boolean;
	/** How a published column appears in the dataset when not as sent. */
	published_as: string | null;
	/** Detail columns: the practices the column applies to. */
	practices: string[] | null;
}

type Meta = BaseMeta<ColumnGroup, Requirement> & {
	personal?: boolean;
	published: boolean;
	published_as?: string;
	practices?: string[];
};

// Metadata goes into zod's registry with `.meta()`; `x-` keys survive into JSON Schema and OpenAPI.
function column<T extends z.ZodType>(schema: T, m: Meta): T {
	return withColumnMeta(schema, m, {
		'x-personal': m.personal ?? false,
		'x-published': m.published,
		...(m.published_as ? { 'x-published-as': m.published_as } : {}),
		...(m.practices ? { 'x-practices': m.practices } : {})
	});
}

const ID_PATTERN = /^[A-Za-z0-9._-]{1,64}$/;
// Two decimals are the precision of acres and dollars in the record store (numeric(…, 2)).
const acres = () => z.number().positive().multipleOf(0.01).max(1_000_000);
const dollars = () => z.number().min(0).multipleOf(0.01).max(1_000_000_000);
const keyText = () => z.string().min(1).max(64);

const inField = PRACTICE_CATALOG.filter((p) => p.credited_basis === 'extent_acres').map((p) => p.code);
const edgeOfField = PRACTICE_CATALOG.filter((p) => p.credited_basis === 'drainage_area_acres').map((p) => p.code);

/** The normalised record: every column present, numbers as numbers, dates 'YYYY-MM-DD', absent = null. */
export const PracticeRecordV1Schema = z
	.object({
		local_id: column(z.string().regex(ID_PATTERN), {
			title: 'Local id',
			description:
				"The district's own id for this practice record. Sending the same local id again updates the record instead of adding a new one.",
			group: 'record',
			kind: 'text',
			requirement: 'always',
			example: 'BLH-2024-0042',
			hint: '1–64 characters: letters, digits, dot, underscore, hyphen',
			published: false,
			published_as: 'replaced by a keyed hash in the research dataset'
		}),
		practice_code: column(z.enum(PRACTICE_CODES as [string, ...string[]]), {
			title: 'Practice code',
			description: 'The national conservation practice standard number of the practice installed.',
			group: 'record',
			kind: 'enum',
			requirement: 'always',
			example: '605',
			hint: 'a code from the practice list',
			published: true
		}),
		county_fips: column(z.string().regex(/^\d{5}$/), {
			title: 'County FIPS code',
			description:
				"The 5-digit FIPS code of the county where the practice is installed: a county of the hub's state that your district serves.",
			group: 'location',
			kind: 'code',
			requirement: 'always',
			example: '19153',
			hint: '5 digits, keep the leading zero',
			published: true
		}),
		installed_on: column(z.iso.date(), {
			title: 'Installed on',
			description: 'The date the practice was installed (completed). Not in the future.',
			group: 'record',
			kind: 'date',
			requirement: 'always',
			example: '2024-10-15',
			hint: 'YYYY-MM-DD, a real calendar date',
			published: true,
			published_as: 'month only (YYYY-MM)'
		}),
		status: column(z.enum(['installed', 'withdrawn']), {
			title: 'Status',
			description:
				'`installed` (the default when empty) or `withdrawn` when the practice is no longer in service; a withdrawn record needs `withdrawn_on`.',
			group: 'record',
			kind: 'enum',
			requirement: 'optional',
			example: 'installed',
			hint: 'installed or withdrawn',
			published: true
		}),
		withdrawn_on: column(z.iso.date().nullable(), {
			title: 'Withdrawn on',
			description: 'The date the practice went out of service. Required when status is `withdrawn`; not before the install date.',
			group: 'record',
			kind: 'date',
			requirement: 'when-withdrawn',
			example: '2027-03-01',
			hint: 'YYYY-MM-DD',
			published: true,
			published_as: 'month only (YYYY-MM)'
		}),
		extent_acres: column(acres().nullable(), {
			title: 'Acres treated',
			description: `The acres the practice is applied to. Required for in-field practices (${inField.join(', ')}).`,
			group: 'extent',
			kind: 'number',
			requirement: 'per-practice',
			unit: 'acres',
			example: 80.5,
			hint: 'greater than 0, at most 2 decimals',
			published: true
		}),
		drainage_area_acres: column(acres().nullable(), {
			title: 'Drainage area treated',
			description: `The acres whose drainage water the practice treats. Required for edge-of-field practices (${edgeOfField.join(', ')}).`,
			group: 'extent',
			kind: 'number',
			requirement: 'per-practice',
			unit: 'acres',
			example: 45,
			hint: 'greater than 0, at most 2 decimals',
			published: true
		}),
		field_id: column(keyText().nullable(), {
			title: 'Field id',
			description: "The district's own key for the field. Practices on the same field are combined (stacked) in estimates.",
			group: 'farm',
			kind: 'text',
			requirement: 'optional',
			example: 'F-1187',
			hint: 'up to 64 characters',
			published: false
		}),
		operation_id: column(keyText().nullable(), {
			title: 'Operation id',
			description: "The district's own key for the farm operation. Used to count distinct operations for the privacy rules.",
			group: 'farm',
			kind: 'text',
			requirement: 'optional',
			example: 'OP-0311',
			hint: 'up to 64 characters',
			published: false
		}),
		operator_name: column(z.string().min(1).max(200).nullable(), {
			title: 'Operator name',
			description: 'The name of the farm operator. Personal information: kept at the hub, never published.',
			group: 'farm',
			kind: 'text',
			requirement: 'optional',
			example: 'Dale Example',
			hint: 'up to 200 characters',
			personal: true,
			published: false
		}),
		latitude: column(z.number().min(-90).max(90).nullable(), {
			title: 'Latitude',
			description: 'Latitude of the practice site, WGS84 decimal degrees. Personal location: never published.',
			group: 'location',
			kind: 'number',
			requirement: 'optional',
			unit: 'decimal degrees (WGS84)',
			example: 41.5868,
			hint: 'between -90 and 90; send with longitude',
			personal: true,
			published: false
		}),
		longitude: column(z.number().min(-180).max(180).nullable(), {
			title: 'Longitude',
			description:
				'Longitude of the practice site, WGS84 decimal degrees (negative west of Greenwich). Personal location: never published.',
			group: 'location',
			kind: 'number',
			requirement: 'optional',
			unit: 'decimal degrees (WGS84)',
			example: -93.625,
			hint: 'between -180 and 180; send with latitude',
			personal: true,
			published: false
		}),
		huc12: column(
			z
				.string()
				.regex(/^\d{12}$/)
				.nullable(),
			{
				title: 'Watershed (HUC12)',
				description: 'The 12-digit hydrologic unit code of the subwatershed the practice drains to.',
				group: 'location',
				kind: 'code',
				requirement: 'optional',
				example: '071000040301',
				hint: '12 digits, keep leading zeros',
				published: true,
				published_as: 'as sent, subject to the small-cell privacy rules'
			}
		),
		cost_total_usd: column(dollars().nullable(), {
			title: 'Total cost',
			description: 'Total installed cost of the practice.',
			group: 'cost',
			kind: 'number',
			requirement: 'optional',
			unit: 'US dollars',
			example: 12500,
			hint: '0 or more, at most 2 decimals, no $ sign or commas',
			published: true
		}),
		cost_share_usd: column(dollars().nullable(), {
			title: 'Cost share paid',
			description: 'The cost-share amount paid by the program(s); not more than the total cost.',
			group: 'cost',
			kind: 'number',
			requirement: 'optional',
			unit: 'US dollars',
			example: 9375,
			hint: '0 or more, at most the total cost',
			published: true
		}),
		funding_program: column(z.string().min(1).max(100).nullable(), {
			title: 'Funding program',
			description: 'The program(s) that paid the cost share, as your district names them.',
			group: 'cost',
			kind: 'text',
			requirement: 'optional',
			example: 'State cost share',
			hint: 'up to 100 characters',
			published: true
		}),
		notes: column(z.string().min(1).max(2000).nullable(), {
			title: 'Notes',
			description: 'Free text for the district. Never published (it may name people or places).',
			group: 'notes',
			kind: 'text',
			requirement: 'optional',
			example: 'Outlet moved 20 ft east of plan.',
			hint: 'up to 2000 characters',
			published: false
		}),
		bed_length_ft: column(z.number().positive().max(1000).nullable(), {
			title: 'Bed length',
			description: 'Length of the woodchip bed.',
			group: 'bioreactor',
			kind: 'number',
			requirement: 'optional',
			unit: 'feet',
			example: 100,
			hint: 'greater than 0',
			published: true,
			practices: [BIOREACTOR_CODE]
		}),
		bed_width_ft: column(z.number().positive().max(200).nullable(), {
			title: 'Bed width',
			description: 'Width of the woodchip bed.',
			group: 'bioreactor',
			kind: 'number',
			requirement: 'optional',
			unit: 'feet',
			example: 20,
			hint: 'greater than 0',
			published: true,
			practices: [BIOREACTOR_CODE]
		}),
		bed_depth_ft: column(z.number().positive().max(30).nullable(), {
			title: 'Bed depth',
			description: 'Depth of woodchips in the bed.',
			group: 'bioreactor',
			kind: 'number',
			requirement: 'optional',
			unit: 'feet',
			example: 4,
			hint: 'greater than 0',
			published: true,
			practices: [BIOREACTOR_CODE]
		}),
		drainage_coefficient_in_per_day: column(z.number().positive().max(10).nullable(), {
			title: 'Drainage coefficient',
			description: 'Design drainage coefficient of the tile system draining to the bioreactor.',
			group: 'bioreactor',
			kind: 'number',
			requirement: 'optional',
			unit: 'inches per day',
			example: 0.5,
			hint: 'greater than 0',
			published: true,
			practices: [BIOREACTOR_CODE]
		}),
		main_diameter_in: column(z.number().positive().max(120).nullable(), {
			title: 'Main diameter',
			description: 'Inside diameter of the tile main feeding the bioreactor.',
			group: 'bioreactor',
			kind: 'number',
			requirement: 'optional',
			unit: 'inches',
			example: 8,
			hint: 'greater than 0',
			published: true,
			practices: [BIOREACTOR_CODE]
		}),
		main_slope_pct: column(z.number().positive().max(100).nullable(), {
			title: 'Main slope',
			description: 'Grade of the tile main.',
			group: 'bioreactor',
			kind: 'number',
			requirement: 'optional',
			unit: 'percent',
			example: 0.3,
			hint: 'greater than 0 (percent, 0.3 means 0.3%)',
			published: true,
			practices: [BIOREACTOR_CODE]
		}),
		media_porosity: column(z.number().positive().lt(1).nullable(), {
			title: 'Media porosity',
			description: `Drainable porosity of the woodchip media as a fraction. When empty, design checks assume ${DEFAULT_MEDIA_POROSITY.toFixed(2)}.`,
			group: 'bioreactor',
			kind: 'number',
			requirement: 'optional',
			unit: 'fraction (0–1)',
			example: 0.7,
			hint: 'between 0 and 1, e.g. 0.70',
			published: true,
			practices: [BIOREACTOR_CODE]
		}),
		cover_species: column(z.string().min(1).max(200).nullable(), {
			title: 'Cover crop species',
			description: 'The cover crop species seeded (for several, separate with semicolons).',
			group: 'practice_details',
			kind: 'text',
			requirement: 'optional',
			example: 'cereal rye',
			hint: 'up to 200 characters',
			published: true,
			practices: [COVER_CROP_CODE]
		}),
		control_structures: column(z.number().int().min(1).max(1000).nullable(), {
			title: 'Control structures',
			description: 'Number of water control structures managed under the drainage water management plan.',
			group: 'practice_details',
			kind: 'integer',
			requirement: 'optional',
			unit: 'count',
			example: 3,
			hint: 'a whole number, 1 or more',
			published: true,
			practices: [DRAINAGE_WATER_MANAGEMENT_CODE]
		})
	})
	.meta({
		title: `Runnel practice record, schema version ${SCHEMA_VERSION}`,
		description:
			'One installed conservation practice at one site, keyed by the district’s own local id. CSV header = JSON property = XLSX header.'
	});

export type PracticeRecordV1 = z.output<typeof PracticeRecordV1Schema>;
export type PracticeRecordColumn = keyof PracticeRecordV1;

/** The columns in their published order (the template order). */
export const PRACTICE_RECORD_COLUMNS = Object.keys(PracticeRecordV1Schema.shape) as PracticeRecordColumn[];

/** Columns every file must have (as headers) and every row must fill. */
export const REQUIRED_COLUMNS: readonly PracticeRecordColumn[] = ['local_id', 'practice_code', 'county_fips', 'installed_on'];

/**
 * What a client sends: the same columns, the optional ones may be omitted. This is the document the
 * published JSON Schema describes.
 */
export const PracticeRecordV1InputSchema = PracticeRecordV1Schema.partial(optionalColumnsMask(PRACTICE_RECORD_COLUMNS, REQUIRED_COLUMNS));

/** The schema of one column (nullable for optional columns). */
export function columnSchema(name: PracticeRecordColumn): z.ZodType {
	return PracticeRecordV1Schema.shape[name];
}

function readInfo(name: PracticeRecordColumn): ColumnInfo {
	const { meta: m, ...base } = readColumnMeta<ColumnGroup, Requirement>(name, columnSchema(name));
	return {
		...base,
		personal: m['x-personal'] === true,
		published: m['x-published'] === true,
		published_as: (m['x-published-as'] as string | undefined) ?? null,
		practices: (m['x-practices'] as string[] | undefined) ?? null
	};
}

/** Column metadata, read back from the schema's `.meta()` (the data dictionary, templates, checker). */
export const COLUMN_INFO: Readonly<Record<PracticeRecordColumn, ColumnInfo>> = Object.fromEntries(
	PRACTICE_RECORD_COLUMNS.map((c) => [c, readInfo(c)])
) as Record<PracticeRecordColumn, ColumnInfo>;

export const PERSONAL_COLUMNS: readonly PracticeRecordColumn[] = PRACTICE_RECORD_COLUMNS.filter((c) => COLUMN_INFO[c].personal);
export const UNPUBLISHED_COLUMNS: readonly PracticeRecordColumn[] = PRACTICE_RECORD_COLUMNS.filter((c) => !COLUMN_INFO[c].published);

export function isPracticeRecordColumn(name: string): name is PracticeRecordColumn {
	return Object.hasOwn(PracticeRecordV1Schema.shape, name);
}

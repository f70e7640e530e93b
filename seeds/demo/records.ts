// The demo scenario's practice records: a deterministic generator (same seed → same rows, byte for byte).
// Everything here is invented for the demo: operations, fields, operators, notes, costs and acres.
// Only the counties are real (Iowa, from the Census list in us-atlas) and the practice codes (the public
// national practice standard numbers). Locations are points near each county's centre, checked to fall
// inside it; watershed codes have the HUC12 format but are made up.
import { createRequire } from 'node:module';
import { geoCentroid, geoContains } from 'd3-geo';
import { feature } from 'topojson-client';
import type { Feature, FeatureCollection, Geometry } from 'geojson';
import type { GeometryCollection, Topology } from 'topojson-specification';
import { PRACTICE_CATALOG } from '../../src/lib/domain/practice-catalog';
import { DEMO_DISTRICTS } from '../demo';

const require = createRequire(import.meta.url);

export type DemoRow = Record<string, string | number | null>;

/** The last install date the demo uses, so the data does not depend on the day it is generated. */
export const DEMO_CUTOFF = '2026-11-15';
export const DEMO_FISCAL_YEARS = { first: 2016, last: 2027 } as const;

/** mulberry32: a small, well-known 32-bit PRNG; plenty for demo data. */
export function prng(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

type Rand = ReturnType<typeof prng>;
const pick = <T>(r: Rand, xs: readonly T[]): T => xs[Math.floor(r() * xs.length)];
const between = (r: Rand, lo: number, hi: number) => lo + r() * (hi - lo);
const round = (x: number, d = 2) => Math.round(x * 10 ** d) / 10 ** d;
const pad = (n: number, w: number) => String(n).padStart(w, '0');

// Invented name parts (combined at random; none is meant to name a real person).
const FIRST = ['Alder', 'Briony', 'Cass', 'Delane', 'Ember', 'Farris', 'Gale', 'Hollis', 'Iva', 'Jory', 'Kestrel', 'Linden', 'Marlo', 'Nell', 'Orrin', 'Perrin', 'Quill', 'Rowan', 'Sable', 'Tamsen', 'Ulla', 'Vesper', 'Wynn', 'Yarrow'];
const LAST = ['Ashgrove', 'Bramblecot', 'Cinderfield', 'Dunmarrow', 'Elderbeck', 'Fallowmere', 'Gorsewick', 'Harrowdale', 'Ivyholt', 'Junebrook', 'Kettlewell', 'Larchmont', 'Mossback', 'Nettlecombe', 'Oakenshade', 'Pennywhistle', 'Quarrydown', 'Rushford', 'Sorrelby', 'Thistlewood'];
const FARM_WORDS = ['Acres', 'Farms', 'Family Farm', 'Grain', 'Bottoms', 'Ridge Farm', 'Partners', 'Land Co.'];
const COVER_SPECIES = ['cereal rye', 'oats', 'cereal rye + radish', 'winter wheat', 'cereal rye + hairy vetch', 'triticale'];
const PROGRAMS = ['State cost share', 'Watershed initiative', 'District fund', 'Federal cost share', 'Landowner paid'];
const NOTES = [
	'Outlet moved 20 ft east of the plan to clear a fence line.',
	'Seeded late because of a wet fall.',
	'Landowner asked for a follow-up visit next spring.',
	'Shared with the neighbouring field through one main.',
	'Built during the field day; photos on file at the district.'
];

/** Practice weights: how often each practice appears (cover crops and nutrient management most). */
const WEIGHT: Record<string, number> = {
	'340': 16,
	'590': 10,
	'329': 8,
	'345': 5,
	'328': 4,
	'327': 3,
	'412': 4,
	'393': 4,
	'386': 3,
	'390': 2,
	'391': 2,
	'600': 3,
	'638': 4,
	'410': 2,
	'554': 4,
	'587': 3,
	'605': 5,
	'604': 4,
	'656': 2,
	'657': 2
};

const DRAINAGE_RANGE: Record<string, [number, number]> = {
	'605': [20, 90],
	'604': [15, 70],
	'554': [40, 160],
	'587': [20, 120],
	'656': [200, 1500],
	'657': [10, 200],
	'410': [5, 80],
	'638': [2, 30]
};

const COST_PER_ACRE: Record<string, [number, number]> = {
	'340': [25, 55],
	'590': [10, 25],
	'329': [12, 20],
	'345': [8, 15],
	'328': [5, 12],
	'327': [150, 300],
	'412': [1500, 3500],
	'393': [250, 500],
	'386': [200, 400],
	'390': [300, 600],
	'391': [800, 1600],
	'600': [400, 900]
};
const COST_EACH: Record<string, [number, number]> = {
	'605': [9000, 22000],
	'604': [5000, 12000],
	'554': [3000, 9000],
	'587': [2500, 7000],
	'656': [60000, 180000],
	'657': [15000, 60000],
	'410': [6000, 25000],
	'638': [3000, 12000]
};

interface Field {
	id: string;
	county: string;
	acres: number;
	lat: number;
	lon: number;
	huc12: string;
}
interface Operation {
	id: string;
	operator: string;
	fields: Field[];
}

function countyFeatures(): Map<string, Feature<Geometry>> {
	const topology = require('us-atlas/counties-10m.json') as Topology<{ counties: GeometryCollection }>;
	const fc = feature(topology, topology.objects.counties) as FeatureCollection<Geometry>;
	return new Map(fc.features.map((f) => [String(f.id), f]));
}

function pointInCounty(r: Rand, county: Feature<Geometry>): [number, number] {
	const [cx, cy] = geoCentroid(county);
	for (let i = 0; i < 50; i++) {
		const p: [number, number] = [round(cx + between(r, -0.12, 0.12), 5), round(cy + between(r, -0.09, 0.09), 5)];
		if (geoContains(county, p)) return p;
	}
	return [round(cx, 5), round(cy, 5)];
}

function weightedPractice(r: Rand): string {
	const total = Object.values(WEIGHT).reduce((a, b) => a + b, 0);
	let x = r() * total;
	for (const [code, w] of Object.entries(WEIGHT)) {
		x -= w;
		if (x < 0) return code;
	}
	return '340';
}

function dateInFiscalYear(r: Rand, fy: number): string | null {
	const start = Date.UTC(fy - 1, 6, 1);
	const end = Math.min(Date.UTC(fy, 5, 30), Date.parse(`${DEMO_CUTOFF}T00:00:00Z`));
	if (end < start) return null;
	return new Date(start + Math.floor(r() * ((end - start) / 86_400_000 + 1)) * 86_400_000).toISOString().slice(0, 10);
}

function addDays(date: string, days: number): string {
	return new Date(Date.parse(`${date}T00:00:00Z`) + days * 86_400_000).toISOString().slice(0, 10);
}

/** One practice record row for a field (all schema columns present; absent values null). */
function practiceRow(r: Rand, localId: string, code: string, installedOn: string, op: Operation, field: Field): DemoRow {
	const practice = PRACTICE_CATALOG.find((p) => p.code === code)!;
	const inField = practice.credited_basis === 'extent_acres';
	const row: DemoRow = {
		local_id: localId,
		practice_code: code,
		county_fips: field.county,
		installed_on: installedOn,
		status: 'installed',
		withdrawn_on: null,
		extent_acres: null,
		drainage_area_acres: null,
		field_id: field.id,
		operation_id: op.id,
		operator_name: op.operator,
		latitude: round(field.lat + between(r, -0.004, 0.004), 5),
		longitude: round(field.lon + between(r, -0.004, 0.004), 5),
		huc12: field.huc12,
		cost_total_usd: null,
		cost_share_usd: null,
		funding_program: null,
		notes: r() < 0.06 ? pick(r, NOTES) : null,
		bed_length_ft: null,
		bed_width_ft: null,
		bed_depth_ft: null,
		drainage_coefficient_in_per_day: null,
		main_diameter_in: null,
		main_slope_pct: null,
		media_porosity: null,
		cover_species: null,
		control_structures: null
	};
	let cost: number;
	if (inField) {
		const acres = round(field.acres * (code === '412' || code === '386' || code === '393' || code === '390' || code === '391' ? between(r, 0.02, 0.08) : between(r, 0.5, 1)), 1);
		row.extent_acres = Math.max(0.5, acres);
		const [lo, hi] = COST_PER_ACRE[code] ?? [20, 60];
		cost = (row.extent_acres as number) * between(r, lo, hi);
	} else {
		const [lo, hi] = DRAINAGE_RANGE[code] ?? [10, 100];
		row.drainage_area_acres = round(between(r, lo, hi), 1);
		const [clo, chi] = COST_EACH[code] ?? [3000, 10000];
		cost = between(r, clo, chi);
	}
	if (r() < 0.85) {
		row.cost_total_usd = round(cost, 0);
		row.cost_share_usd = round((row.cost_total_usd as number) * pick(r, [0.5, 0.6, 0.75, 0.75, 0.9]), 2);
		row.funding_program = pick(r, PROGRAMS);
	}
	if (code === '605') {
		row.bed_length_ft = round(between(r, 60, 150), 0);
		row.bed_width_ft = round(between(r, 15, 30), 0);
		row.bed_depth_ft = round(between(r, 3.5, 5), 1);
		row.drainage_coefficient_in_per_day = pick(r, [0.375, 0.5, 0.5, 0.75]);
		row.main_diameter_in = pick(r, [6, 8, 8, 10, 12]);
		row.main_slope_pct = round(between(r, 0.2, 1), 2);
		if (r() < 0.6) row.media_porosity = round(between(r, 0.66, 0.76), 2);
	}
	if (code === '340') row.cover_species = pick(r, COVER_SPECIES);
	if (code === '554') row.control_structures = 1 + Math.floor(r() * 6);
	return row;
}

export interface DemoDistrictRecords {
	district: string;
	/** What the district first sent: every record, installed. */
	initial: DemoRow[];
	/** A later file: corrections to some records and withdrawals (new versions). */
	update: DemoRow[];
}

/** About 3,000 records over fiscal years 2016–2027, every practice, every demo county. */
export function generateDemoRecords(seed = 20161): DemoDistrictRecords[] {
	const features = countyFeatures();
	const out: DemoDistrictRecords[] = [];
	DEMO_DISTRICTS.forEach((d, di) => {
		const r = prng(seed + di * 7919);
		const operations: Operation[] = [];
		let fieldNo = 0;
		for (let o = 1; o <= 28; o++) {
			const last = pick(r, LAST);
			const operator = r() < 0.35 ? `${last} ${pick(r, FARM_WORDS)}` : `${pick(r, FIRST)} ${last}`;
			const fields: Field[] = [];
			const nFields = 2 + Math.floor(r() * 5);
			for (let f = 0; f < nFields; f++) {
				const county = d.counties[(o + f) % d.counties.length];
				const [lon, lat] = pointInCounty(r, features.get(county)!);
				fields.push({
					id: `F-${d.code}-${pad(++fieldNo, 4)}`,
					county,
					acres: round(between(r, 35, 160), 1),
					lat,
					lon,
					huc12: `07${pad(Math.floor(r() * 10_000_000_000), 10)}`
				});
			}
			operations.push({ id: `OP-${d.code}-${pad(o, 3)}`, operator, fields });
		}

		const rows: DemoRow[] = [];
		let seq = 0;
		const add = (code: string, fy: number, op: Operation, field: Field) => {
			const date = dateInFiscalYear(r, fy);
			if (!date) return;
			rows.push(practiceRow(r, `${d.code}-${fy}-${pad(++seq, 4)}`, code, date, op, field));
		};
		// Every practice in every county at least once (the demo shows the whole catalog everywhere).
		d.counties.forEach((county, ci) => {
			PRACTICE_CATALOG.forEach((p, pi) => {
				// An operation with a field in this county (every county has some: fields rotate through them).
				const start = (ci * 7 + pi) % operations.length;
				const op = [...operations.slice(start), ...operations.slice(0, start)].find((o) => o.fields.some((f) => f.county === county))!;
				add(p.code, DEMO_FISCAL_YEARS.first + ((pi + ci) % 12), op, op.fields.find((f) => f.county === county)!);
			});
		});
		// Stacked practices: a bioreactor, cover crop and nutrient management on the same field.
		for (let s = 0; s < 12; s++) {
			const op = operations[s];
			const field = op.fields[0];
			const fy = 2018 + (s % 9);
			add('605', fy, op, field);
			add('340', fy, op, field);
			add('590', fy, op, field);
		}
		// The rest: more practices in later years, as programs grew.
		const target = 500 - (di % 2) * 20;
		while (rows.length < target) {
			const fy = DEMO_FISCAL_YEARS.first + Math.min(11, Math.floor(Math.sqrt(r()) * 12));
			const op = pick(r, operations);
			add(weightedPractice(r), fy, op, pick(r, op.fields));
		}

		// The later file: some corrections and a few withdrawals.
		const update: DemoRow[] = [];
		for (const row of rows) {
			const x = r();
			if (x < 0.015 && (row.installed_on as string) < '2025-01-01') {
				const withdrawnOn = addDays(row.installed_on as string, 200 + Math.floor(r() * 500));
				if (withdrawnOn <= DEMO_CUTOFF) update.push({ ...row, status: 'withdrawn', withdrawn_on: withdrawnOn, notes: 'Removed when the field was sold.' });
			} else if (x < 0.045) {
				const fix = { ...row };
				if (fix.cost_total_usd !== null) fix.cost_total_usd = round((fix.cost_total_usd as number) * 1.08, 0);
				else if (fix.extent_acres !== null) fix.extent_acres = round((fix.extent_acres as number) * 0.95, 1);
				else fix.notes = 'As-built survey checked.';
				update.push(fix);
			}
		}
		out.push({ district: d.code, initial: rows, update });
	});
	return out;
}

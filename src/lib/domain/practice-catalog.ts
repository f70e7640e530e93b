// The practice catalog: national conservation practice standards by number (a public trade standard),
// with how Runnel credits each one. Pure data, shared by server, browser and CLI; seeded into `practices`.
//
// Sources: practice numbers and titles are those of the USDA NRCS National Handbook of Conservation
// Practices (conservation practice standards). Units and lifespans are RECALLED FROM MEMORY of the NRCS
// practice lifespan list, not read in a stored copy; each row says so in `source_note`.
// `category`/`credited_basis`: Runnel's own rule (product brief): in-field practices are credited on the
// acres treated, edge-of-field practices on the drainage area they treat.

export type PracticeCategory = 'in_field' | 'edge_of_field';
export type CreditedBasis = 'extent_acres' | 'drainage_area_acres';

export interface CatalogPractice {
	code: string;
	name: string;
	category: PracticeCategory;
	credited_basis: CreditedBasis;
	/** Unit the standard counts the practice in. */
	unit: 'ac' | 'ft' | 'no';
	lifespan_years: number;
	source_note: string;
}

const RECALLED =
	'Title: NRCS conservation practice standard. Unit and lifespan recalled from memory (NRCS practice lifespan list), not checked against a stored copy.';

const p = (
	code: string,
	name: string,
	category: PracticeCategory,
	unit: CatalogPractice['unit'],
	lifespan_years: number
): CatalogPractice => ({
	code,
	name,
	category,
	credited_basis: category === 'in_field' ? 'extent_acres' : 'drainage_area_acres',
	unit,
	lifespan_years,
	source_note: RECALLED
});

export const PRACTICE_CATALOG: readonly CatalogPractice[] = [
	p('327', 'Conservation Cover', 'in_field', 'ac', 10),
	p('328', 'Conservation Crop Rotation', 'in_field', 'ac', 1),
	p('329', 'Residue and Tillage Management, No Till', 'in_field', 'ac', 1),
	p('340', 'Cover Crop', 'in_field', 'ac', 1),
	p('345', 'Residue and Tillage Management, Reduced Till', 'in_field', 'ac', 1),
	p('386', 'Field Border', 'in_field', 'ac', 5),
	p('390', 'Riparian Herbaceous Cover', 'in_field', 'ac', 5),
	p('391', 'Riparian Forest Buffer', 'in_field', 'ac', 15),
	p('393', 'Filter Strip', 'in_field', 'ac', 10),
	p('410', 'Grade Stabilization Structure', 'edge_of_field', 'no', 15),
	p('412', 'Grassed Waterway', 'in_field', 'ac', 10),
	p('554', 'Drainage Water Management', 'edge_of_field', 'ac', 1),
	p('587', 'Structure for Water Control', 'edge_of_field', 'no', 20),
	p('590', 'Nutrient Management', 'in_field', 'ac', 1),
	p('600', 'Terrace', 'in_field', 'ft', 10),
	p('604', 'Saturated Buffer', 'edge_of_field', 'ft', 15),
	p('605', 'Denitrifying Bioreactor', 'edge_of_field', 'no', 15),
	p('638', 'Water and Sediment Control Basin', 'edge_of_field', 'no', 10),
	p('656', 'Constructed Wetland', 'edge_of_field', 'ac', 15),
	p('657', 'Wetland Restoration', 'edge_of_field', 'ac', 15)
];

const byCode = new Map(PRACTICE_CATALOG.map((x) => [x.code, x]));

export function practiceByCode(code: string): CatalogPractice | undefined {
	return byCode.get(code);
}

export const PRACTICE_CODES: readonly string[] = PRACTICE_CATALOG.map((x) => x.code);

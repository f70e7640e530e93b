// A minimal ZIP writer (PKWARE APPNOTE.TXT 6.3: local headers, central directory, end record) for
// crafting archives the readers must refuse: bombs, lying sizes, encrypted flags, hidden entries.
import { crc32, deflateRawSync } from 'node:zlib';

export interface ZipEntry {
	name: string;
	data: Buffer;
	/** 0 = stored, 8 = deflate (default). */
	method?: 0 | 8;
	flags?: number;
	/** Override the uncompressed size written in both headers (to make an archive lie). */
	declaredSize?: number;
	/** Leave the entry out of the central directory (a hidden entry). */
	hidden?: boolean;
}

export function makeZip(entries: ZipEntry[]): Buffer {
	const locals: Buffer[] = [];
	const centrals: Buffer[] = [];
	let offset = 0;
	let listed = 0;
	for (const e of entries) {
		const method = e.method ?? 8;
		const body = method === 8 ? deflateRawSync(e.data) : e.data;
		const name = Buffer.from(e.name, 'utf8');
		const crc = crc32(e.data) >>> 0;
		const size = e.declaredSize ?? e.data.length;
		const lh = Buffer.alloc(30);
		lh.writeUInt32LE(0x04034b50, 0);
		lh.writeUInt16LE(20, 4);
		lh.writeUInt16LE(e.flags ?? 0, 6);
		lh.writeUInt16LE(method, 8);
		lh.writeUInt32LE(crc, 14);
		lh.writeUInt32LE(body.length, 18);
		lh.writeUInt32LE(size, 22);
		lh.writeUInt16LE(name.length, 26);
		locals.push(lh, name, body);
		if (!e.hidden) {
			const ch = Buffer.alloc(46);
			ch.writeUInt32LE(0x02014b50, 0);
			ch.writeUInt16LE(20, 4);
			ch.writeUInt16LE(20, 6);
			ch.writeUInt16LE(e.flags ?? 0, 8);
			ch.writeUInt16LE(method, 10);
			ch.writeUInt32LE(crc, 16);
			ch.writeUInt32LE(body.length, 20);
			ch.writeUInt32LE(size, 24);
			ch.writeUInt16LE(name.length, 28);
			ch.writeUInt32LE(offset, 42);
			centrals.push(ch, name);
			listed++;
		}
		offset += 30 + name.length + body.length;
	}
	const cd = Buffer.concat(centrals);
	const end = Buffer.alloc(22);
	end.writeUInt32LE(0x06054b50, 0);
	end.writeUInt16LE(listed, 8);
	end.writeUInt16LE(listed, 10);
	end.writeUInt32LE(cd.length, 12);
	end.writeUInt32LE(offset, 16);
	return Buffer.concat([...locals, cd, end]);
}

/** The smallest parts of a workbook, for wrapping crafted entries in something XLSX-shaped. */
export const MINIMAL_PARTS: ZipEntry[] = [
	{
		name: '[Content_Types].xml',
		data: Buffer.from(
			'<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="xml" ContentType="application/xml"/></Types>'
		)
	},
	{
		name: 'xl/workbook.xml',
		data: Buffer.from(
			'<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheets><sheet name="Sheet1" sheetId="1" r:id="rId1" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"/></sheets></workbook>'
		)
	}
];

export const WORKBOOK_RELS: ZipEntry = {
	name: 'xl/_rels/workbook.xml.rels',
	data: Buffer.from(
		'<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/></Relationships>'
	)
};

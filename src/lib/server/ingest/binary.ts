// File-level findings for a file whose first bytes show it is not the format it was sent as.
import type { Finding } from '../../schema/findings';
import type { BinaryKind } from './decode';
import { fileFinding, type RowFormat } from './row-events';

const NAMES: Record<RowFormat, string> = { csv: 'CSV', xlsx: 'XLSX', ndjson: 'NDJSON', json: 'JSON' };

export function binaryFinding(kind: BinaryKind, sentAs: RowFormat): Finding {
	const as = NAMES[sentAs];
	switch (kind) {
		case 'zip':
			return fileFinding(
				'wrong-format',
				`This file is a ZIP archive (probably an XLSX workbook), not ${as}. Send workbooks as XLSX (content type application/vnd.openxmlformats-officedocument.spreadsheetml.sheet).`,
				{ rule: 'format', expected: sentAs, found: 'zip' }
			);
		case 'ole':
			return fileFinding(
				'wrong-format',
				`This file is an old Excel 97–2003 workbook (.xls) or a password-protected workbook, not ${as}. Open it in Excel and save it as CSV UTF-8 or as an XLSX workbook without a password.`,
				{ rule: 'format', expected: sentAs, found: 'ole' }
			);
		case 'pdf':
			return fileFinding('wrong-format', `This file is a PDF, not ${as}.`, { rule: 'format', expected: sentAs, found: 'pdf' });
		default:
			return fileFinding('binary-file', `This file holds binary data (NUL bytes), not ${as} text.`, {
				rule: 'format',
				expected: sentAs,
				found: 'binary'
			});
	}
}

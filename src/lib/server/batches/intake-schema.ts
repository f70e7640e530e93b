// The one place the intake pipeline meets the schema area's reader and checker (src/lib/schema and
// src/lib/server/ingest), so the batch code depends on a small, named surface.
import type { UploadFormat } from '../db/schema';
import { ApiError } from '../http/problem';
import { detectFormat } from '../ingest/read-rows';

export { createRecordChecker, type CheckContext } from '$lib/schema/check-records';
export { SCHEMA_VERSION, type PracticeRecordV1 } from '$lib/schema/practice-record';
export { checkEventFile, checkFile, type CheckEventOf } from '../ingest/check-file';
export { EVENT_SCHEMA_VERSION } from '$lib/schema/practice-event';
export { loadCheckContext } from '../ingest/context';
export { declaredCharset } from '../ingest/read-rows';

/** The upload format from Content-Type (and file name); an unsupported type is a 415 problem. */
export function uploadFormatOf(contentType: string | null, fileName: string | null): UploadFormat {
	const format = detectFormat(contentType ?? '', fileName ?? undefined);
	if (!format)
		throw new ApiError({
			status: 415,
			type: 'unsupported-media-type',
			detail:
				'Send the file as text/csv, application/vnd.openxmlformats-officedocument.spreadsheetml.sheet (XLSX), application/x-ndjson or application/json (an array of records).',
			headers: {
				'accept-post': 'text/csv, application/vnd.openxmlformats-officedocument.spreadsheetml.sheet, application/x-ndjson, application/json'
			}
		});
	return format as UploadFormat;
}

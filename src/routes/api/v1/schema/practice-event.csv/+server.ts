import { eventCsvTemplate, EVENT_CSV_TEMPLATE_FILE_NAME } from '$lib/schema/practice-event';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = () =>
	new Response(eventCsvTemplate(), {
		headers: {
			'content-type': 'text/csv; charset=utf-8; header=present',
			'content-disposition': `attachment; filename="${EVENT_CSV_TEMPLATE_FILE_NAME}"`,
			'cache-control': 'public, max-age=300'
		}
	});

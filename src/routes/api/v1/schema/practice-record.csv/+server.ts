import { csvTemplate, CSV_TEMPLATE_FILE_NAME } from '$lib/schema/templates';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = () =>
	new Response(csvTemplate(), {
		headers: {
			'content-type': 'text/csv; charset=utf-8; header=present',
			'content-disposition': `attachment; filename="${CSV_TEMPLATE_FILE_NAME}"`,
			'cache-control': 'public, max-age=300'
		}
	});

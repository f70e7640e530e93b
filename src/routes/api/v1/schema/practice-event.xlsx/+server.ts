import { XLSX_MEDIA_TYPE } from '$lib/server/ingest/read-rows';
import { eventsXlsxTemplate } from '$lib/server/ingest/template-events-xlsx';
import { EVENT_XLSX_TEMPLATE_FILE_NAME } from '$lib/schema/practice-event';
import type { RequestHandler } from './$types';

// Built once: the events template does not depend on hub settings.
let built: Promise<Buffer> | undefined;

export const GET: RequestHandler = async () => {
	built ??= eventsXlsxTemplate();
	built.catch(() => (built = undefined));
	const body = await built;
	return new Response(new Uint8Array(body), {
		headers: {
			'content-type': XLSX_MEDIA_TYPE,
			'content-disposition': `attachment; filename="${EVENT_XLSX_TEMPLATE_FILE_NAME}"`,
			'cache-control': 'public, max-age=300'
		}
	});
};

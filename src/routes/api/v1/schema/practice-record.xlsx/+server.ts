import { getDb } from '$lib/server/db';
import { hubStateFips } from '$lib/server/ingest/context';
import { stateCountyList } from '$lib/server/ingest/reference';
import { xlsxTemplate } from '$lib/server/ingest/template-xlsx';
import { XLSX_MEDIA_TYPE } from '$lib/server/ingest/read-rows';
import { XLSX_TEMPLATE_FILE_NAME } from '$lib/schema/templates';
import type { RequestHandler } from './$types';

// Built once per hub state (the state can only change through settings).
const built = new Map<string, Promise<Buffer>>();

export const GET: RequestHandler = async () => {
	const stateFips = await hubStateFips(getDb());
	let pending = built.get(stateFips);
	if (!pending) {
		pending = xlsxTemplate({ stateFips, counties: stateCountyList(stateFips) });
		built.set(stateFips, pending);
		pending.catch(() => built.delete(stateFips));
	}
	const body = await pending;
	return new Response(new Uint8Array(body), {
		headers: {
			'content-type': XLSX_MEDIA_TYPE,
			'content-disposition': `attachment; filename="${XLSX_TEMPLATE_FILE_NAME}"`,
			'cache-control': 'public, max-age=300'
		}
	});
};

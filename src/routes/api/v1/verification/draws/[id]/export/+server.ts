// GET a draw's sample and outcomes as CSV or XLSX (`format=csv|xlsx`), streamed. A district gets its own visits.
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { enumParam } from '$lib/server/http/query';
import { drawView } from '$lib/server/verification/draws';
import { exportFileName, visitsCsv, visitsXlsx, XLSX_TYPE } from '$lib/server/verification/export';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params, url, locals }) => {
	const format = enumParam(url, 'format', ['csv', 'xlsx'] as const) ?? 'csv';
	const p = locals.principal!;
	const draw = await drawView(getDb(), p, params.id);
	if (!draw) throw new ApiError({ status: 404, type: 'draw-not-found', detail: 'There is no such draw.' });
	const disposition = `attachment; filename="${exportFileName(draw, format)}"`;
	return format === 'csv'
		? new Response(visitsCsv(p, draw), { headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': disposition } })
		: new Response(visitsXlsx(p, draw), { headers: { 'content-type': XLSX_TYPE, 'content-disposition': disposition } });
};

import { json } from '@sveltejs/kit';
import { actorOf } from '$lib/server/auth/principal';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { createMethod, listMethods, methodJson } from '$lib/server/methods';
import type { RequestHandler } from './$types';

/** Every stored reduction method version, newest first, with the active one flagged. */
export const GET: RequestHandler = async () => {
	const methods = await listMethods(getDb());
	return json({ data: methods.map(methodJson), active_version: methods.find((m) => m.active)?.version ?? null });
};

/** Adds a new method version (a full method document; stored versions are never changed). */
export const POST: RequestHandler = async ({ request, locals, url }) => {
	if (!(request.headers.get('content-type') ?? '').startsWith('application/json')) {
		throw new ApiError({ status: 415, detail: 'Send the method as application/json.' });
	}
	let body: unknown;
	try {
		body = await request.json();
	} catch {
		throw new ApiError({ status: 400, type: 'invalid-json', detail: 'The body is not valid JSON.' });
	}
	const stored = await createMethod(getDb(), body, actorOf(locals.principal!));
	return json(methodJson(stored), { status: 201, headers: { location: `${url.pathname}/${encodeURIComponent(stored.version)}` } });
};

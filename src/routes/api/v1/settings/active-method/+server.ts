import { json } from '@sveltejs/kit';
import { ActiveMethodBody } from '$lib/schema/reduction-method';
import { actorOf } from '$lib/server/auth/principal';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { getActiveMethodVersion, issuesToErrors, setActiveMethod } from '$lib/server/methods';
import type { RequestHandler } from './$types';

/** Which reduction method version estimates and rollups use now. */
export const GET: RequestHandler = async () => json({ version: await getActiveMethodVersion(getDb()) });

/** Picks the active method version: `{ "version": "ia-2017.1" }`. */
export const PUT: RequestHandler = async ({ request, locals }) => {
	let body: unknown;
	try {
		body = await request.json();
	} catch {
		throw new ApiError({ status: 400, type: 'invalid-json', detail: 'Send JSON such as {"version": "ia-2017.1"}.' });
	}
	const parsed = ActiveMethodBody.safeParse(body);
	if (!parsed.success)
		throw new ApiError({ status: 422, detail: 'The body needs a method version.', errors: issuesToErrors(parsed.error.issues) });
	const change = await setActiveMethod(getDb(), parsed.data.version, actorOf(locals.principal!));
	return json({ version: change.to, previous_version: change.from });
};

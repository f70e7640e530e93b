// Sign-out: a POST from the header's form. Ends the session in the database, not just the cookie.
import { redirect } from '@sveltejs/kit';
import { recordAudit } from '$lib/server/accounts/audit';
import { getDb } from '$lib/server/db';
import { clearSessionCookie, endSession } from '$lib/server/auth/sessions';
import { clientOf } from '$lib/server/http/client';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const p = event.locals.principal;
	if (p?.kind === 'session') {
		const db = getDb();
		if (await endSession(db, p.credentialId)) {
			await recordAudit(db, {
				action: 'sign-out',
				actor: p,
				subjectUserId: p.userId,
				ip: clientOf(event).ip,
				detail: { session: p.credentialId }
			});
		}
	}
	clearSessionCookie(event.cookies);
	redirect(303, '/sign-in?notice=signed-out');
};

import { error, fail } from '@sveltejs/kit';
import { config } from '$lib/server/config';
import { getDb } from '$lib/server/db';
import { displayTime } from '$lib/server/mail/format';
import { getOutboxMessage, retryMessage } from '$lib/server/mail/outbox';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ params }) => {
	const found = await getOutboxMessage(getDb(), params.id);
	if (!found) error(404, 'No such message in the outbox.');
	const { message: m, received: r } = found;
	return {
		maxAttempts: config.mailMaxAttempts,
		message: {
			id: m.id,
			kind: m.kind,
			to: m.to_addresses,
			subject: m.subject,
			status: m.status,
			attempts: m.attempts,
			lastError: m.last_error,
			messageId: m.message_id,
			created: displayTime(m.created_at)!,
			sent: displayTime(m.sent_at),
			nextAttempt: m.status === 'queued' ? displayTime(m.next_attempt_at) : null,
			text: m.text_body,
			html: m.html_body
		},
		received: r
			? {
					at: displayTime(r.received_at)!,
					envelopeFrom: r.envelope_from,
					envelopeTo: r.envelope_to,
					from: r.from_header,
					to: r.to_header,
					subject: r.subject,
					sizeBytes: r.size_bytes,
					raw: r.raw
				}
			: null
	};
}) satisfies PageServerLoad;

export const actions = {
	retry: async ({ params }) => {
		const ok = await retryMessage(getDb(), params.id);
		if (!ok) return fail(409, { retryError: 'Only a failed message can be queued again.' });
		return { retried: true };
	}
} satisfies Actions;

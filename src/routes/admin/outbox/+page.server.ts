import { config } from '$lib/server/config';
import { getDb } from '$lib/server/db';
import { displayTime } from '$lib/server/mail/format';
import { decodeCursor, listOutbox, OUTBOX_STATUSES, outboxCounts, type OutboxStatus } from '$lib/server/mail/outbox';
import { transportDescription } from '$lib/server/mail/transport';
import type { PageServerLoad } from './$types';

export const load = (async ({ url }) => {
	const db = getDb();
	const s = url.searchParams.get('status');
	const status = (OUTBOX_STATUSES as readonly string[]).includes(s ?? '') ? (s as OutboxStatus) : null;
	const [page, counts, delivery] = await Promise.all([
		listOutbox(db, { status, before: decodeCursor(url.searchParams.get('cursor')) }),
		outboxCounts(db),
		transportDescription().catch(() => ({ kind: 'relay' as const, describe: 'unknown (the SMTP transport could not be set up)' }))
	]);
	return {
		status,
		counts,
		delivery,
		maxAttempts: config.mailMaxAttempts,
		first: !url.searchParams.get('cursor'),
		next: page.nextCursor ? `?${new URLSearchParams({ ...(status ? { status } : {}), cursor: page.nextCursor })}` : null,
		messages: page.items.map((m) => ({
			id: m.id,
			kind: m.kind,
			to: m.to,
			subject: m.subject,
			status: m.status,
			attempts: m.attempts,
			lastError: m.lastError,
			created: displayTime(m.createdAt)!,
			sent: displayTime(m.sentAt),
			nextAttempt: m.status === 'queued' ? displayTime(m.nextAttemptAt) : null
		}))
	};
}) satisfies PageServerLoad;

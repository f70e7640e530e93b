// Who is on the other end of a request, for throttling, sessions and the audit log. Behind a proxy,
// set adapter-node's ADDRESS_HEADER / XFF_DEPTH so the address is the client's, not the proxy's.
import type { RequestEvent } from '@sveltejs/kit';

export function clientOf(event: Pick<RequestEvent, 'getClientAddress' | 'request'>): { ip: string | null; userAgent: string | null } {
	let ip: string | null;
	try {
		ip = event.getClientAddress().replace(/^::ffff:/, '');
	} catch {
		ip = null; // the adapter could not tell (misconfigured ADDRESS_HEADER)
	}
	return { ip, userAgent: event.request.headers.get('user-agent') };
}

// OAuth 2.0 client-credentials token endpoint (RFC 6749 §4.4); see $lib/server/auth/token-endpoint.
import { getDb } from '$lib/server/db';
import { tokenEndpoint } from '$lib/server/auth/token-endpoint';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = ({ request }) => tokenEndpoint(request, getDb());

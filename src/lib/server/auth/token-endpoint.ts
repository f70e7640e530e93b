// `POST /api/v1/oauth/token`: the client-credentials grant (RFC 6749 §4.4). Answers in OAuth's own
// format (§5.1, §5.2), not RFC 9457: OAuth client libraries read `error` from a JSON object.
//
// Client authentication (§2.3.1): HTTP Basic with the form-urlencoded client_id and client_secret, or
// both as body parameters; never both ways at once.
import type { Kysely } from 'kysely';
import { isScope, type Scope } from '$lib/domain/scopes';
import type { OAuthErrorCode, TokenResponse } from '$lib/schema/oauth';
import type { Database } from '../db/schema';
import { issueAccessToken } from './access-tokens';
import { authenticateClient, touchClient } from './oauth-clients';

const NO_STORE = { 'cache-control': 'no-store', pragma: 'no-cache' };
const MAX_BODY = 8 * 1024;

export function oauthError(status: 400 | 401, error: OAuthErrorCode, description: string): Response {
	const headers: Record<string, string> = { 'content-type': 'application/json', ...NO_STORE };
	if (error === 'invalid_client') headers['www-authenticate'] = 'Basic realm="runnel", charset="UTF-8"';
	return new Response(JSON.stringify({ error, error_description: description }), { status, headers });
}

/** `application/x-www-form-urlencoded` decoding of one component (`+` is a space). */
function formDecode(s: string): string {
	return decodeURIComponent(s.replace(/\+/g, ' '));
}

type Credentials = { clientId: string; secret: string } | { error: Response } | null;

function basicCredentials(header: string | null): Credentials {
	if (!header) return null;
	const m = /^Basic\s+([A-Za-z0-9+/=]+)\s*$/i.exec(header);
	if (!m) return { error: oauthError(401, 'invalid_client', 'Authenticate with HTTP Basic (client_id:client_secret).') };
	const decoded = Buffer.from(m[1], 'base64').toString('utf8');
	const i = decoded.indexOf(':');
	if (i < 0) return { error: oauthError(401, 'invalid_client', 'The Basic credentials need the form client_id:client_secret.') };
	try {
		return { clientId: formDecode(decoded.slice(0, i)), secret: formDecode(decoded.slice(i + 1)) };
	} catch {
		return { error: oauthError(401, 'invalid_client', 'The Basic credentials are not correctly encoded.') };
	}
}

export async function tokenEndpoint(request: Request, db: Kysely<Database>): Promise<Response> {
	const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	if (type !== 'application/x-www-form-urlencoded') {
		return oauthError(400, 'invalid_request', 'Send the token request as application/x-www-form-urlencoded (RFC 6749 §4.4.2).');
	}
	const length = Number(request.headers.get('content-length') ?? 0);
	if (length > MAX_BODY) return oauthError(400, 'invalid_request', 'The token request is too large.');
	const body = await request.text();
	if (body.length > MAX_BODY) return oauthError(400, 'invalid_request', 'The token request is too large.');
	const params = new URLSearchParams(body);
	for (const name of new Set(params.keys())) {
		if (params.getAll(name).length > 1) return oauthError(400, 'invalid_request', `The parameter ${name} is repeated.`);
	}

	const grantType = params.get('grant_type');
	if (!grantType) return oauthError(400, 'invalid_request', 'grant_type is missing; use grant_type=client_credentials.');

	// Client authentication: exactly one method.
	let creds = basicCredentials(request.headers.get('authorization'));
	const bodyId = params.get('client_id');
	const bodySecret = params.get('client_secret');
	if (creds && bodySecret !== null) {
		return oauthError(400, 'invalid_request', 'Use either HTTP Basic or client_secret in the body, not both.');
	}
	if (!creds && bodyId !== null && bodySecret !== null) creds = { clientId: bodyId, secret: bodySecret };
	if (!creds) return oauthError(401, 'invalid_client', 'Client authentication is missing (HTTP Basic, or client_id and client_secret).');
	if ('error' in creds) return creds.error;
	if (bodyId !== null && bodyId !== creds.clientId)
		return oauthError(400, 'invalid_request', 'client_id in the body differs from the authenticated client.');

	const client = await authenticateClient(db, creds.clientId, creds.secret);
	if (!client) return oauthError(401, 'invalid_client', 'The client is unknown or revoked, or the secret is wrong.');

	if (grantType !== 'client_credentials') {
		return oauthError(400, 'unsupported_grant_type', `This server issues tokens only for grant_type=client_credentials, not ${grantType}.`);
	}

	const requested = (params.get('scope') ?? '').split(' ').filter((s) => s.length > 0);
	let scopes: Scope[];
	if (requested.length === 0) scopes = client.scopes.filter(isScope);
	else {
		const refused = requested.filter((s) => !isScope(s) || !client.scopes.includes(s));
		if (refused.length > 0) {
			return oauthError(400, 'invalid_scope', `This client may not request: ${refused.join(' ')}. It holds: ${client.scopes.join(' ')}.`);
		}
		scopes = [...new Set(requested)] as Scope[];
	}

	const token = await issueAccessToken(db, client, scopes);
	await touchClient(db, client.id);
	const answer: TokenResponse = { access_token: token.accessToken, token_type: 'Bearer', expires_in: token.expiresIn, scope: token.scope };
	return new Response(JSON.stringify(answer), { status: 200, headers: { 'content-type': 'application/json', ...NO_STORE } });
}

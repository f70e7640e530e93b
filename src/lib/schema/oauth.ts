// OAuth 2.0 client-credentials grant (RFC 6749 §4.4): the token request and answers, and the admin
// form that registers a client. Shared by the server, the OpenAPI generator and the CLI.
import { z } from 'zod';
import { ROLE_SCOPES } from '$lib/domain/scopes';

export const DISTRICT_CLIENT_SCOPES = ROLE_SCOPES.district;

/** Body of `POST /api/v1/oauth/token` (application/x-www-form-urlencoded). */
export const TokenRequest = z.object({
	grant_type: z.string().describe('Always `client_credentials`.'),
	scope: z.string().optional().describe('Space-separated scopes; omitted: every scope the client was registered with.'),
	client_id: z.string().optional().describe('With `client_secret`, instead of HTTP Basic authentication.'),
	client_secret: z.string().optional()
});

/** Successful token response (RFC 6749 §5.1). */
export const TokenResponse = z.object({
	access_token: z.string().describe('A JWT (RFC 9068) signed with a key from /.well-known/jwks.json.'),
	token_type: z.literal('Bearer'),
	expires_in: z.number().int().describe('Seconds until the token expires.'),
	scope: z.string()
});
export type TokenResponse = z.infer<typeof TokenResponse>;

export const OAUTH_ERROR_CODES = [
	'invalid_request',
	'invalid_client',
	'invalid_grant',
	'unauthorized_client',
	'unsupported_grant_type',
	'invalid_scope'
] as const;
export type OAuthErrorCode = (typeof OAUTH_ERROR_CODES)[number];

/** Error response (RFC 6749 §5.2). */
export const OAuthErrorResponse = z.object({
	error: z.enum(OAUTH_ERROR_CODES),
	error_description: z.string().optional()
});

/** The admin form that registers a client for a district. */
export const OAuthClientCreate = z.object({
	name: z.string().trim().min(1, 'Give the client a name, e.g. "Nightly upload server".').max(100, 'At most 100 characters.'),
	district_id: z.coerce.number({ error: 'Choose a district.' }).int().positive('Choose a district.'),
	scopes: z
		.array(z.enum(DISTRICT_CLIENT_SCOPES as unknown as [string, ...string[]], { error: 'Not a scope a district may hold.' }))
		.min(1, 'Choose at least one scope.')
});
export type OAuthClientCreate = z.infer<typeof OAuthClientCreate>;

// The public keys that verify Runnel's access tokens and signed release manifests (RFC 7517 JWK Set).
import { json } from '@sveltejs/kit';
import { publicJwks } from '$lib/server/keys';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async () =>
	json(await publicJwks(), {
		headers: { 'content-type': 'application/jwk-set+json', 'cache-control': 'public, max-age=300', 'access-control-allow-origin': '*' }
	});

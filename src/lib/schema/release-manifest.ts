// The manifest of a dataset release: every file with its size and SHA-256, signed as a compact JWS
// (RFC 7515) with the hub's key; the public key is served at /.well-known/jwks.json. Shared by the
// dataset area (which writes it) and the CLI's `runnel release verify` (which checks it).
import { z } from 'zod';

const hasControlCharacters = (s: string) => [...s].some((c) => c.charCodeAt(0) < 0x20 || c.charCodeAt(0) === 0x7f);

/** A file name inside a release folder: a relative path, no `..`, no backslashes, no control characters. */
export const ReleaseFileName = z
	.string()
	.min(1)
	.max(255)
	.refine(
		(n) =>
			!n.startsWith('/') && !n.includes('\\') && !hasControlCharacters(n) && n.split('/').every((s) => s !== '' && s !== '.' && s !== '..'),
		{
			message: 'must be a relative path inside the release folder'
		}
	);

export const ReleaseManifestFile = z.object({
	name: ReleaseFileName,
	bytes: z.number().int().nonnegative(),
	sha256: z.string().regex(/^[0-9a-f]{64}$/, 'must be 64 lowercase hex digits')
});
export type ReleaseManifestFile = z.infer<typeof ReleaseManifestFile>;

export const ReleaseManifest = z.looseObject({
	version: z.string().min(1),
	files: z.array(ReleaseManifestFile).min(1)
});
export type ReleaseManifest = z.infer<typeof ReleaseManifest>;

/** In a release folder: the signed manifest (compact JWS), and optionally its payload in plain JSON. */
export const MANIFEST_JWS_FILE = 'manifest.jws';
export const MANIFEST_JSON_FILE = 'manifest.json';

/** The signature algorithms a release may be signed with (asymmetric only: the public key verifies). */
export const RELEASE_SIGNING_ALGORITHMS = [
	'ES256',
	'ES384',
	'ES512',
	'EdDSA',
	'Ed25519',
	'RS256',
	'RS384',
	'RS512',
	'PS256',
	'PS384',
	'PS512'
];

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

/** The small-cell counts a release states (src/lib/domain/anonymise.ts computes them). */
export const ReleaseSmallCells = z.object({
	k: z.number().int().positive(),
	dominance: z.number(),
	records: z.number().int().nonnegative(),
	cells: z.number().int().nonnegative(),
	published_as_county: z.number().int().nonnegative(),
	generalised_to_region: z.number().int().nonnegative(),
	generalised_to_state: z.number().int().nonnegative(),
	suppressed: z.number().int().nonnegative(),
	suppressed_records: z.number().int().nonnegative(),
	dominated: z.number().int().nonnegative(),
	huc8_withheld: z.number().int().nonnegative()
});
export type ReleaseSmallCells = z.infer<typeof ReleaseSmallCells>;

/**
 * The manifest exactly as the hub writes and signs it: the shape above (what `runnel release verify`
 * needs) plus what a citation needs. The hub validates every manifest against this before signing.
 */
export const HubReleaseManifest = z.strictObject({
	version: z.string().min(1),
	published_at: z.iso.datetime(),
	method_version: z.string().min(1),
	row_count: z.number().int().nonnegative(),
	small_cells: ReleaseSmallCells,
	files: z
		.array(
			z.strictObject({
				name: ReleaseFileName,
				media_type: z.string().min(1),
				bytes: z.number().int().nonnegative(),
				sha256: z.string().regex(/^[0-9a-f]{64}$/)
			})
		)
		.min(1)
});
export type HubReleaseManifest = z.infer<typeof HubReleaseManifest>;

// Shapes every API area shares: the RFC 9457 problem, and the standard error responses.
import { z } from 'zod';
import { registry } from './registry';

export const ProblemSchema = registry.register(
	'Problem',
	z
		.object({
			type: z
				.string()
				.meta({ description: '`about:blank` or `urn:runnel:problem:<slug>`.', examples: ['urn:runnel:problem:insufficient-scope'] }),
			status: z.number().int(),
			title: z.string(),
			detail: z.string().optional(),
			instance: z.string().optional().meta({ description: 'The request id, as `urn:uuid:…` (also in the X-Request-Id header).' }),
			errors: z
				.array(
					z.object({
						detail: z.string(),
						pointer: z
							.string()
							.meta({ description: 'JSON Pointer (RFC 6901) to the offending member, or `#/query/<name>` for a query parameter.' })
					})
				)
				.optional()
		})
		.catchall(z.unknown())
		.meta({ description: 'An RFC 9457 problem (application/problem+json).' })
);

const problem = (description: string) => ({ description, content: { 'application/problem+json': { schema: ProblemSchema } } });

/** Error responses to spread into a path's `responses`. */
export const problems = {
	400: problem('The request is malformed.'),
	401: problem('No token, or an unknown, revoked or expired one.'),
	403: problem('The token lacks the scope, or the role may not use this resource.'),
	404: problem('No such resource.'),
	409: problem('Conflict with the current state.'),
	413: problem('The body is larger than the limit.'),
	415: problem('The content type is not supported.'),
	422: problem('The request is well-formed but cannot be processed.'),
	503: problem('The service or its database is not available; retry later.')
} as const;

// The foundation's paths: health and the caller's identity.
import { z } from 'zod';
import { ROLES, SCOPES } from '../../domain/scopes';
import { problems } from './common';
import { needsToken, registry } from './registry';

export const HealthSchema = registry.register(
	'Health',
	z
		.object({
			status: z.enum(['ok', 'degraded']),
			version: z.string().meta({ examples: ['0.1.0'] }),
			database: z.enum(['ok', 'unreachable']),
			migrations: z.object({
				current: z.boolean(),
				applied: z.number().int(),
				shipped: z.number().int(),
				pending: z.array(z.string())
			})
		})
		.meta({ description: 'Whether the app, its database and its migrations are ready.' })
);

export const MeSchema = registry.register(
	'Me',
	z
		.object({
			kind: z.enum(['session', 'token', 'client']),
			user_id: z.number().int().nullable(),
			email: z.string().nullable(),
			name: z.string(),
			role: z.enum(ROLES),
			district_id: z.number().int().nullable().meta({ description: 'Set for the `district` role: the one district it reads and writes.' }),
			scopes: z.array(z.enum(SCOPES)),
			expires_at: z.string().nullable().meta({ description: 'When the token or session expires (ISO 8601), or null.' })
		})
		.meta({ description: 'The caller, as the hub sees it.' })
);

registry.registerPath({
	method: 'get',
	path: '/api/v1/health',
	tags: ['Service'],
	summary: 'Health of the app and its database',
	responses: {
		200: { description: 'Ready.', content: { 'application/json': { schema: HealthSchema } } },
		503: {
			description: 'Not ready (database unreachable or migrations pending); the body is a problem with a `health` member.',
			content: { 'application/problem+json': { schema: z.object({}).catchall(z.unknown()) } }
		}
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/me',
	tags: ['Service'],
	summary: 'Who am I',
	security: needsToken(),
	responses: { 200: { description: 'The caller.', content: { 'application/json': { schema: MeSchema } } }, 401: problems[401] }
});

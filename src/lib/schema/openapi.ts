// The OpenAPI 3.1 document of the REST API, generated from the zod schemas the server validates with.
// `npm run openapi` writes it to openapi/openapi.json; GET /api/v1/openapi.json serves it.
import { OpenApiGeneratorV31 } from '@asteasolutions/zod-to-openapi';
import { APP_VERSION } from '../version';
import { registry } from './api';
import { SCHEMA_VERSION } from './practice-record';

export type OpenApiDocument = ReturnType<OpenApiGeneratorV31['generateDocument']>;

let cached: OpenApiDocument | undefined;

export function buildOpenApiDocument(): OpenApiDocument {
	if (cached) return cached;
	const generator = new OpenApiGeneratorV31(registry.definitions);
	cached = generator.generateDocument({
		openapi: '3.1.0',
		info: {
			title: 'Runnel API',
			version: APP_VERSION,
			description: [
				'The hub where conservation districts report water-quality practices. Major version in the path (`/api/v1`); inside v1 only compatible changes, so clients ignore fields they do not know.',
				'',
				`Practice records follow schema version ${SCHEMA_VERSION} (GET /api/v1/schema/practice-record.json).`,
				'Errors are RFC 9457 problems (`application/problem+json`). Lists use cursor pagination with opaque `cursor` values and `next` links. Every response carries `X-Request-Id`.'
			].join('\n')
		},
		servers: [{ url: '/', description: 'This hub' }]
	});
	return cached;
}

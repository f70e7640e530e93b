// The one OpenAPI registry. Each API area registers its schemas and paths in its own module in this
// folder (pure zod, relative imports) and adds one import line to ./index.ts; ../openapi.ts generates
// the OpenAPI 3.1 document from everything registered. See DEVELOPERS.md, "OpenAPI".
import { extendZodWithOpenApi, OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';

// Adds `.openapi()` to zod schemas (registry.register needs it). Server, scripts and CLI only: the
// browser never imports this folder.
extendZodWithOpenApi(z);

export const registry = new OpenAPIRegistry();

/** The bearer-token security scheme (personal API tokens `rnl_…`, or a browser session cookie). */
export const bearerAuth = registry.registerComponent('securitySchemes', 'bearerAuth', {
	type: 'http',
	scheme: 'bearer',
	description: 'A personal API token (`rnl_…`) created on the Tokens page. Browser sessions use a cookie instead.'
});

/** `security` for a path that needs a token (optionally naming the scopes, for documentation). */
export const needsToken = (...scopes: string[]) => [{ [bearerAuth.name]: scopes }];

// Swagger UI for /api/docs, served from our own origin out of the swagger-ui-dist package (no CDN).
// Only the files the page needs are served; the page has no inline script or style, so it works under
// a strict Content-Security-Policy (`script-src 'self'`; Swagger UI itself sets inline style attributes).
import { createRequire } from 'node:module';
import { readFile } from 'node:fs/promises';
import path from 'node:path';

const require = createRequire(import.meta.url);
const DIST = path.dirname(require.resolve('swagger-ui-dist/package.json'));

/** The files under /api/docs/{name}: swagger-ui-dist's own, plus our initializer. */
export const SWAGGER_ASSETS: Record<string, string> = {
	'swagger-ui.css': 'text/css; charset=utf-8',
	'swagger-ui.css.map': 'application/json',
	'swagger-ui-bundle.js': 'text/javascript; charset=utf-8',
	'swagger-ui-bundle.js.map': 'application/json',
	'favicon-32x32.png': 'image/png',
	'favicon-16x16.png': 'image/png'
};

/** Our own start-up script (swagger-ui-dist's default one points at a demo API). */
export const SWAGGER_INITIALIZER = `// Runnel: start Swagger UI on this hub's OpenAPI document.
window.addEventListener('load', function () {
	window.ui = SwaggerUIBundle({
		url: '/api/v1/openapi.json',
		dom_id: '#swagger-ui',
		deepLinking: true,
		validatorUrl: null,
		presets: [SwaggerUIBundle.presets.apis],
		layout: 'BaseLayout'
	});
});
`;

export const API_DOCS_HTML = `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Runnel API documentation</title>
<link rel="icon" type="image/png" href="/api/docs/favicon-32x32.png">
<link rel="stylesheet" href="/api/docs/swagger-ui.css">
</head>
<body>
<main id="swagger-ui" aria-label="Runnel API documentation"><p>Loading the API documentation… (it needs JavaScript; the raw document is at <a href="/api/v1/openapi.json">/api/v1/openapi.json</a>).</p></main>
<script src="/api/docs/swagger-ui-bundle.js"></script>
<script src="/api/docs/swagger-initializer.js"></script>
</body>
</html>
`;

export async function swaggerAsset(name: string): Promise<{ body: Buffer | string; type: string } | null> {
	if (name === 'swagger-initializer.js') return { body: SWAGGER_INITIALIZER, type: 'text/javascript; charset=utf-8' };
	const type = SWAGGER_ASSETS[name];
	if (!type) return null;
	return { body: await readFile(path.join(DIST, name)), type };
}

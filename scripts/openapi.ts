// `npm run openapi`: writes the OpenAPI 3.1 document generated from the zod schemas to
// openapi/openapi.json. `npm run openapi -- --check` writes nothing and exits 1 when the committed file
// differs from what the code generates (CI runs it).
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { buildOpenApiDocument } from '../src/lib/schema/openapi';
import { ROOT } from './lib/env';

const outIndex = process.argv.indexOf('--out');
// --out FILE: another target (the tests use it); default openapi/openapi.json.
const file = outIndex > 0 ? path.resolve(process.argv[outIndex + 1]) : path.join(ROOT, 'openapi', 'openapi.json');
const text = `${JSON.stringify(buildOpenApiDocument(), null, '\t')}\n`;

if (process.argv.includes('--check')) {
	const current = existsSync(file) ? readFileSync(file, 'utf8') : '';
	if (current !== text) {
		console.error(`${path.relative(ROOT, file)} is out of date with the zod schemas. Run \`npm run openapi\` and commit the result.`);
		process.exit(1);
	}
	console.error(`${path.relative(ROOT, file)} is current.`);
} else {
	mkdirSync(path.dirname(file), { recursive: true });
	writeFileSync(file, text);
	console.error(`Wrote ${path.relative(ROOT, file)}.`);
}

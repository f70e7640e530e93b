// Lists every route of the app from src/routes: its SvelteKit route id and the methods it answers.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { ROOT } from './app';

export interface RouteInfo {
	id: string;
	kind: 'page' | 'endpoint';
	methods: string[];
	file: string;
}

const ROUTES = path.join(ROOT, 'src', 'routes');

function walk(dir: string, out: string[] = []): string[] {
	for (const e of readdirSync(dir)) {
		const p = path.join(dir, e);
		if (statSync(p).isDirectory()) walk(p, out);
		else out.push(p);
	}
	return out;
}

export function listRoutes(): RouteInfo[] {
	const byId = new Map<string, RouteInfo>();
	for (const file of walk(ROUTES)) {
		const base = path.basename(file);
		const rel = path.relative(ROUTES, path.dirname(file)).split(path.sep).join('/');
		const id = '/' + rel;
		const routeId = id === '/' ? '/' : id.replace(/\/$/, '');
		if (base === '+server.ts') {
			const src = readFileSync(file, 'utf8');
			const methods = [...src.matchAll(/export\s+(?:const|async function|function)\s+(GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) => m[1]);
			byId.set(`endpoint:${routeId}`, { id: routeId, kind: 'endpoint', methods, file });
		} else if (base === '+page.svelte') {
			const server = path.join(path.dirname(file), '+page.server.ts');
			let methods = ['GET'];
			try {
				if (/export\s+const\s+actions\b/.test(readFileSync(server, 'utf8'))) methods = ['GET', 'POST'];
			} catch {
				/* no server file */
			}
			byId.set(`page:${routeId}`, { id: routeId, kind: 'page', methods, file });
		}
	}
	return [...byId.values()].sort((a, b) => a.id.localeCompare(b.id));
}

/** A concrete URL for a route id: parameters get a harmless sample value. */
export function sampleUrl(id: string): string {
	return (
		id
			.replace(/\/\([^)]+\)/g, '')
			.replace(/\[\.\.\.[^\]]+\]/g, 'x')
			.replace(/\[\[[^\]]+\]\]/g, '')
			.replace(/\[[^\]=]+(=[^\]]+)?\]/g, '1') || '/'
	);
}

// Loads the built app (build/handler.js) for supertest and the browser tests.
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { freePort } from '../../scripts/lib/postgres';

export const ROOT = path.resolve(import.meta.dirname, '..', '..');

type Handler = (req: http.IncomingMessage, res: http.ServerResponse) => void;
let handlerPromise: Promise<Handler> | undefined;

/** The adapter-node request handler of the built app (needs DATABASE_URL set first). */
export function appHandler(): Promise<Handler> {
	process.env.NODE_ENV ??= 'test';
	process.env.RUNNEL_ROOT ??= ROOT;
	process.env.ORIGIN ??= 'http://127.0.0.1:3000';
	// As scripts/start.ts: uploads are limited by MAX_UPLOAD_MB while streaming, not by adapter-node.
	process.env.BODY_SIZE_LIMIT ??= 'Infinity';
	handlerPromise ??= import(pathToFileURL(path.join(ROOT, 'build', 'handler.js')).href).then((m) => m.handler as Handler);
	return handlerPromise;
}

/** Starts the built app on a free loopback port; returns its origin and a close function. */
export async function startApp(): Promise<{ origin: string; close: () => Promise<void> }> {
	// Form posts must come from the app's own ORIGIN (CSRF check), and adapter-node reads ORIGIN once, on
	// import: when this process has not loaded the app yet, choose the port first and make it the ORIGIN.
	let port = 0;
	if (!handlerPromise && !process.env.ORIGIN) {
		port = await freePort();
		process.env.ORIGIN = `http://127.0.0.1:${port}`;
	}
	const handler = await appHandler();
	const server = http.createServer(handler);
	await new Promise<void>((r) => server.listen(port, '127.0.0.1', r));
	const origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
	return {
		origin,
		close: () =>
			new Promise<void>((r) => {
				server.closeAllConnections();
				server.close(() => r());
			})
	};
}

export const DEMO_TOKENS = {
	admin: 'rnl_demo_admin',
	manager: 'rnl_demo_manager',
	district: 'rnl_demo_district',
	district2: 'rnl_demo_district2',
	researcher: 'rnl_demo_researcher'
} as const;

export const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

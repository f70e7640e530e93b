// Content-Security-Policy and the other security headers, on pages and on everything else.
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';

function directives(csp: string): Map<string, string[]> {
	return new Map(
		csp
			.split(';')
			.map((d) => d.trim().split(/\s+/))
			.filter((d) => d[0])
			.map(([name, ...values]) => [name, values])
	);
}

describe('Content-Security-Policy', () => {
	it('pages: self only, a nonce for the inline bootstrap script, no framing, forms and base to self', async () => {
		for (const [path, token] of [
			['/', null],
			['/admin/outbox', DEMO_TOKENS.admin],
			['/admin/oauth-clients', DEMO_TOKENS.admin]
		] as const) {
			const req = request(await appHandler()).get(path);
			if (token) req.set(bearer(token));
			const res = await req;
			expect(res.status, path).toBe(200);
			const csp = res.headers['content-security-policy'];
			expect(csp, path).toBeTruthy();
			const d = directives(csp);
			expect(d.get('default-src')).toEqual(["'self'"]);
			expect(d.get('frame-ancestors')).toEqual(["'none'"]);
			expect(d.get('form-action')).toEqual(["'self'"]);
			expect(d.get('base-uri')).toEqual(["'self'"]);
			expect(d.get('object-src')).toEqual(["'none'"]);
			expect(d.get('img-src')).toEqual(["'self'", 'data:']);
			const script = d.get('script-src')!;
			expect(script[0]).toBe("'self'");
			expect(script).not.toContain("'unsafe-inline'");
			expect(script).not.toContain("'unsafe-eval'");
			const nonce = script.find((s) => s.startsWith("'nonce-"))!.slice(7, -1);
			// Every inline script on the page carries that nonce.
			const inline = [...res.text.matchAll(/<script(?![^>]*\bsrc=)([^>]*)>/g)];
			expect(inline.length).toBeGreaterThan(0);
			for (const m of inline) expect(m[1]).toContain(`nonce="${nonce}"`);
			expect(res.headers['x-content-type-options']).toBe('nosniff');
			expect(res.headers['referrer-policy']).toBe('same-origin');
			expect(res.headers['x-frame-options']).toBe('DENY');
		}
	});

	it('the nonce changes on every response', async () => {
		const a = (await request(await appHandler()).get('/')).headers['content-security-policy'];
		const b = (await request(await appHandler()).get('/')).headers['content-security-policy'];
		expect(a).not.toBe(b);
	});

	it('non-page responses (JSON, problems, JWKS) get a policy that allows nothing', async () => {
		for (const path of ['/api/v1/health', '/api/v1/me', '/.well-known/jwks.json', '/api/v1/no-such']) {
			const res = await request(await appHandler()).get(path);
			expect(res.headers['content-security-policy'], path).toBe(
				"default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'"
			);
			expect(res.headers['x-content-type-options']).toBe('nosniff');
		}
	});
});

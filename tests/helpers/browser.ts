// Headless Debian Chromium driven by playwright-core, plus the checks every page gets:
// no request leaves 127.0.0.1, axe-core finds no serious or critical violation, a screenshot is saved.
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { ROOT } from './app';

const require = createRequire(import.meta.url);
export const SCREENSHOTS = path.join(ROOT, 'tests', 'e2e', 'screenshots');

export interface Browser {
	context: BrowserContext;
	/** Every URL the pages requested, to prove nothing left the machine. */
	requests: string[];
	newPage: () => Promise<Page>;
	close: () => Promise<void>;
}

export async function launch(): Promise<Browser> {
	const profile = mkdtempSync(path.join(os.tmpdir(), 'runnel-chromium-'));
	const context = await chromium.launchPersistentContext(profile, {
		executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
		headless: true,
		viewport: { width: 1280, height: 900 },
		args: [
			'--no-sandbox',
			'--disable-gpu',
			'--disable-quic',
			'--disable-background-networking',
			'--disable-component-update',
			'--disable-sync',
			'--no-first-run'
		]
	});
	const requests: string[] = [];
	context.on('request', (r) => requests.push(r.url()));
	return {
		context,
		requests,
		newPage: () => context.newPage(),
		close: async () => {
			await context.close();
			rmSync(profile, { recursive: true, force: true });
		}
	};
}

/** Requests that went anywhere but the app's own loopback origin (data: and blob: URLs are local). */
export function foreignRequests(requests: string[]): string[] {
	return requests.filter((u) => !/^(data|blob|about):/.test(u) && !/^https?:\/\/(127\.0\.0\.1|localhost)(:\d+)?\//.test(u));
}

const axeSource = readFileSync(require.resolve('axe-core/axe.min.js'), 'utf8');

/** axe-core violations of impact serious or critical on the current page. */
export async function seriousA11yViolations(page: Page): Promise<Array<{ id: string; impact: string; help: string; nodes: number }>> {
	// Evaluated through the DevTools protocol rather than as an inline <script>, which the pages'
	// Content-Security-Policy (no inline scripts without our nonce) rightly refuses.
	await page.evaluate(axeSource);
	const result = await page.evaluate(async () => {
		// @ts-expect-error axe is injected above
		const r = await window.axe.run(document, { resultTypes: ['violations'] });
		return r.violations.map((v: { id: string; impact: string; help: string; nodes: unknown[] }) => ({
			id: v.id,
			impact: v.impact,
			help: v.help,
			nodes: v.nodes.length
		}));
	});
	return (result as Array<{ id: string; impact: string; help: string; nodes: number }>).filter(
		(v) => v.impact === 'serious' || v.impact === 'critical'
	);
}

export async function screenshot(page: Page, name: string): Promise<string> {
	mkdirSync(SCREENSHOTS, { recursive: true });
	const file = path.join(SCREENSHOTS, `${name}.png`);
	await page.screenshot({ path: file, fullPage: true });
	return file;
}

/** Signs in through the sign-in form (added by the accounts area). */
export async function signIn(page: Page, origin: string, email: string, password = 'runnel-demo'): Promise<void> {
	await page.goto(`${origin}/sign-in`);
	await page.getByLabel('Email').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: /sign in/i }).click();
	await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

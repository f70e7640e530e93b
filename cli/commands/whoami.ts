// `runnel whoami`: who the hub thinks you are, and where the URL and token came from.
import type { Command } from 'commander';
import type { Context } from '../context';
import { EXIT } from '../exit-codes';
import type { Registry } from '../program';

export interface Me {
	kind: string;
	user_id: number | null;
	email: string | null;
	name: string;
	role: string;
	district_id: number | null;
	scopes: string[];
	expires_at: string | null;
}

export function describePrincipal(me: Me): string {
	return `${me.name}${me.email ? ` <${me.email}>` : ''} (${me.role}${me.district_id !== null ? `, district #${me.district_id}` : ''})`;
}

const SOURCE_WORDS = { flag: 'from --url', env: 'from RUNNEL_URL', config: 'from the config file', none: '' } as const;

async function whoami(ctx: Context): Promise<number> {
	const client = ctx.client();
	const me = await client.getJson<Me>('/api/v1/me');
	const s = ctx.settings();
	if (ctx.opts.json) {
		await ctx.ui.printJson({ ...me, hub: client.baseUrl, url_source: s.urlSource, token_source: s.tokenSource });
		return EXIT.ok;
	}
	await ctx.ui.line(describePrincipal(me));
	await ctx.ui.line(`scopes: ${me.scopes.join(', ') || '(none)'}`);
	if (me.expires_at) await ctx.ui.line(`token expires: ${me.expires_at}`);
	await ctx.ui.line(`hub: ${client.baseUrl} (${SOURCE_WORDS[s.urlSource]})`);
	await ctx.ui.line(`token: from ${s.tokenOrigin}`);
	return EXIT.ok;
}

export function registerWhoami(program: Command, r: Registry): Command {
	return program
		.command('whoami')
		.description('show who the hub takes you for, and where the URL and token came from')
		.addHelpText(
			'after',
			`
Examples:
  $ runnel whoami
  $ RUNNEL_TOKEN=rnl_… runnel whoami --json`
		)
		.action(r.action(whoami));
}

// `runnel login --url URL`: reads a token (stdin, a hidden prompt or --token-file), checks it against the
// hub, and stores URL + token in the user's config file (mode 0600).
import { readFileSync } from 'node:fs';
import type { Command } from 'commander';
import { cleanToken, normaliseUrl, writeConfig } from '../config';
import type { Context } from '../context';
import { CliError, EXIT, UsageError } from '../exit-codes';
import type { Registry } from '../program';
import { promptHidden, readStdinSecret } from '../prompt';
import { describePrincipal, type Me } from './whoami';

async function readToken(ctx: Context): Promise<{ token: string; origin: string }> {
	if (ctx.opts.tokenFile) {
		let text: string;
		try {
			text = readFileSync(ctx.opts.tokenFile, 'utf8');
		} catch (e) {
			throw new CliError(
				`Cannot read the token file ${ctx.opts.tokenFile}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}.`,
				EXIT.auth
			);
		}
		return { token: cleanToken(text, `the token file ${ctx.opts.tokenFile}`), origin: `--token-file ${ctx.opts.tokenFile}` };
	}
	if (!ctx.io.stdin.isTTY) return { token: cleanToken(await readStdinSecret(ctx.io), 'stdin'), origin: 'stdin' };
	if (!ctx.canPrompt) throw new UsageError('No token: pipe it on stdin or pass --token-file FILE (--no-input forbids the prompt).');
	return { token: cleanToken(await promptHidden(ctx.io, 'API token (input hidden): '), 'the prompt'), origin: 'the token you typed' };
}

async function login(ctx: Context): Promise<number> {
	const rawUrl = ctx.opts.url ?? ctx.io.env.RUNNEL_URL ?? ctx.storedConfig().url;
	if (!rawUrl) throw new UsageError('Which hub? Pass --url URL, e.g. `runnel login --url https://runnel.example.org`.');
	const url = normaliseUrl(rawUrl);
	const { token, origin } = await readToken(ctx);
	const me = await ctx.client({ url, token, tokenOrigin: origin }).getJson<Me>('/api/v1/me');
	writeConfig(ctx.configFile, { url, token, saved_at: new Date().toISOString() });
	if (ctx.opts.json) await ctx.ui.printJson({ url, config_file: ctx.configFile, me });
	else
		ctx.ui.info(`Logged in to ${url} as ${describePrincipal(me)}.\nSaved the URL and token in ${ctx.configFile} (readable only by you).`);
	return EXIT.ok;
}

export function registerLogin(program: Command, r: Registry): Command {
	return program
		.command('login')
		.description('store the hub URL and your API token (checked against the hub first)')
		.addHelpText(
			'after',
			`
The token is read from stdin when it is piped in, from --token-file, or asked for
with the input hidden. It is never echoed. The config file is written with mode 0600.

Examples:
  $ runnel login --url https://runnel.example.org          (asks for the token)
  $ printf '%s' "$TOKEN" | runnel login --url https://runnel.example.org
  $ runnel login --url https://runnel.example.org --token-file /etc/runnel/token`
		)
		.action(r.action(login));
}

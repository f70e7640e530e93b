// `npm run keys -- list | rotate | retire KID [--force]`: the hub's signing keys (src/lib/server/keys.ts)
// against DATABASE_URL. Rotation makes a new key active; the old one stays published until retired.
import { closeDb } from '../src/lib/server/db';
import { listSigningKeys, retireSigningKey, rotateSigningKey } from '../src/lib/server/keys';

async function main(args: string[]): Promise<void> {
	const [command, kid] = args.filter((a) => !a.startsWith('--'));
	if (command === 'list' || command === undefined) {
		const keys = await listSigningKeys();
		if (keys.length === 0) console.log('No signing keys yet (the first is made on first use).');
		for (const k of keys) {
			const when = [`created ${k.createdAt.toISOString()}`];
			if (k.rotatedAt) when.push(`rotated out ${k.rotatedAt.toISOString()}`);
			if (k.retiredAt) when.push(`retired ${k.retiredAt.toISOString()}`);
			console.log(`${k.status.padEnd(8)} ${k.kid}  ${k.alg}  ${k.encrypted ? 'encrypted' : 'NOT encrypted'}  ${when.join(', ')}`);
		}
	} else if (command === 'rotate') {
		const r = await rotateSigningKey();
		console.log(`active: ${r.kid}${r.previousKid ? `\nprevious (still published): ${r.previousKid}` : ''}`);
	} else if (command === 'retire' && kid) {
		await retireSigningKey(kid, { force: args.includes('--force') });
		console.log(`retired: ${kid}`);
	} else {
		throw new Error('usage: npm run keys -- list | rotate | retire KID [--force]');
	}
}

main(process.argv.slice(2))
	.then(() => closeDb())
	.catch(async (e) => {
		console.error(`keys: ${e instanceof Error ? e.message : e}`);
		await closeDb();
		process.exit(1);
	});

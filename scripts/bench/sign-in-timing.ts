// `npm run bench -- sign-in-timing`: does a sign-in with an unknown e-mail take as long as one with a
// known e-mail and a wrong password? (If it were much faster, response times would reveal which
// addresses have accounts.) Runs the real sign-in service against a throwaway database and prints
// medians and the ratio unknown ÷ known, with a right-password sign-in (which also opens a session)
// for scale. A ratio near 1.0 is what we want.
import { performance } from 'node:perf_hooks';
import { closeDb, getDb } from '../../src/lib/server/db';
import { hashPassword } from '../../src/lib/server/auth/password';
import { signInWithPassword } from '../../src/lib/server/auth/sign-in';
import { migrateToLatest } from '../migrate';
import { seedReference } from '../../seeds/reference';

const ROUNDS = Number(process.env.BENCH_ROUNDS ?? 40);
const EMAIL = 'bench.timing@runnel.test';
const PASSWORD = 'bench timing password';

const median = (xs: number[]) => {
	const s = [...xs].sort((a, b) => a - b);
	return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

export async function run(): Promise<void> {
	await migrateToLatest();
	const db = getDb();
	await seedReference(db);
	await db.deleteFrom('users').where('email', '=', EMAIL).execute();
	await db
		.insertInto('users')
		.values({ email: EMAIL, name: 'Bench Timing', role: 'researcher', district_id: null, password_hash: await hashPassword(PASSWORD) })
		.execute();

	const cases = {
		'known e-mail, wrong password': { email: EMAIL, password: 'not it' },
		'unknown e-mail': { email: 'nobody.at.all@runnel.test', password: 'not it' },
		'known e-mail, right password': { email: EMAIL, password: PASSWORD }
	} as const;
	const times: Record<string, number[]> = Object.fromEntries(Object.keys(cases).map((k) => [k, []]));

	// Interleave the cases so drift on a shared machine hits them all alike; warm up first.
	for (let round = -3; round < ROUNDS; round++) {
		for (const [name, c] of Object.entries(cases)) {
			await db.deleteFrom('sign_in_throttle').execute();
			const t = performance.now();
			const r = await signInWithPassword(db, { ...c, ip: null, userAgent: 'bench' });
			const ms = performance.now() - t;
			if (r.ok !== (name === 'known e-mail, right password')) throw new Error(`unexpected outcome for ${name}`);
			if (round >= 0) times[name].push(ms);
		}
	}
	const base = median(times['known e-mail, wrong password']);
	console.log(`sign-in timing, ${ROUNDS} rounds each (median ms; ratio against "known e-mail, wrong password")`);
	for (const [name, xs] of Object.entries(times)) {
		console.log(`  ${name.padEnd(30)} ${median(xs).toFixed(1).padStart(7)} ms   ×${(median(xs) / base).toFixed(2)}`);
	}
	await closeDb();
}

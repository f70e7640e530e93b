// /dataset — the research dataset: releases (notes, small-cell counts, withdrawn state, downloads), the
// data dictionary, how to verify a release, copy-paste examples. Managers and admins publish and withdraw.
import { fail } from '@sveltejs/kit';
import { dataDictionary, CreateRelease, WithdrawRelease } from '$lib/schema/dataset';
import { ReleaseSmallCells } from '$lib/schema/release-manifest';
import { actorOf } from '$lib/server/auth/principal';
import { getDb } from '$lib/server/db';
import { listReleases, publishRelease, RELEASE_FILES, withdrawRelease } from '$lib/server/dataset/release';
import { fieldErrors, formValues } from '$lib/server/http/forms';
import { ApiError } from '$lib/server/http/problem';
import type { Actions, PageServerLoad } from './$types';

const canManage = (role: string | undefined) => role === 'manager' || role === 'admin';

/** The next free version of the current state fiscal year (named for the year it ends, July start). */
function suggestVersion(versions: string[], now = new Date()): string {
	const fy = now.getUTCMonth() >= 6 ? now.getUTCFullYear() + 1 : now.getUTCFullYear();
	const taken = versions.filter((v) => v.startsWith(`${fy}.`)).map((v) => Number(v.split('.')[1]));
	return `${fy}.${taken.length ? Math.max(...taken) + 1 : 1}`;
}

export const load = (async ({ locals, url }) => {
	const rows = await listReleases(getDb());
	return {
		origin: url.origin,
		canManage: canManage(locals.principal?.role),
		releases: rows.map((r) => ({
			version: r.version,
			status: r.status,
			notes: r.notes,
			method_version: r.method_version,
			row_count: r.row_count,
			small_cells: ReleaseSmallCells.safeParse(r.small_cells).data ?? null,
			published_at: r.published_at.toISOString(),
			withdrawn_reason: r.withdrawn_reason,
			withdrawn_at: r.withdrawn_at ? new Date(r.withdrawn_at).toISOString() : null
		})),
		files: [...RELEASE_FILES, 'manifest.json', 'manifest.jws'],
		dictionary: dataDictionary(),
		suggestedVersion: suggestVersion(rows.map((r) => r.version))
	};
}) satisfies PageServerLoad;

function problemToFail(action: string, e: unknown, values: Record<string, unknown>) {
	if (e instanceof ApiError) {
		const field = e.init.status === 409 && action === 'publish' ? 'version' : '_form';
		return fail(e.init.status, { action, errors: { [field]: e.init.detail ?? 'The request failed.' }, values });
	}
	throw e;
}

export const actions = {
	publish: async ({ request, locals, url }) => {
		const values = formValues(await request.formData());
		const parsed = CreateRelease.safeParse(values);
		if (!parsed.success) return fail(400, { action: 'publish', errors: fieldErrors(parsed.error), values });
		const started = Date.now();
		try {
			const m = await publishRelease(getDb(), {
				version: parsed.data.version,
				notes: parsed.data.notes,
				actor: actorOf(locals.principal!),
				origin: url.origin
			});
			return {
				action: 'publish',
				message: `Release ${m.version} is published: ${m.row_count} records, ${m.files.length} files, signed (${((Date.now() - started) / 1000).toFixed(1)} s). Researchers who want it are being e-mailed.`
			};
		} catch (e) {
			return problemToFail('publish', e, values);
		}
	},

	withdraw: async ({ request }) => {
		const values = formValues(await request.formData());
		const version = String(values.version ?? '');
		const parsed = WithdrawRelease.safeParse(values);
		if (!parsed.success) return fail(400, { action: 'withdraw', version, errors: fieldErrors(parsed.error), values });
		try {
			await withdrawRelease(getDb(), version, parsed.data.reason);
			return { action: 'withdraw', version, message: `Release ${version} is withdrawn. It stays listed with your reason.` };
		} catch (e) {
			const r = problemToFail('withdraw', e, values);
			return fail(r.status, { ...r.data, version });
		}
	}
} satisfies Actions;

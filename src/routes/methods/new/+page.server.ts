import { error, fail, redirect } from '@sveltejs/kit';
import { PRACTICE_CATALOG } from '$lib/domain/practice-catalog';
import { actorOf } from '$lib/server/auth/principal';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { fieldsToMethod, formDataToFields, methodToFields } from '$lib/method-form';
import { createMethod, getActiveMethodVersion, getMethod, setActiveMethod } from '$lib/server/methods';
import type { Actions, PageServerLoad } from './$types';

async function baseMethod(from: string | null) {
	const db = getDb();
	const version = from || (await getActiveMethodVersion(db));
	const base = await getMethod(db, version);
	if (!base) error(404, `No reduction method has version ${version}.`);
	return base;
}

export const load = (async ({ url }) => {
	const base = await baseMethod(url.searchParams.get('from'));
	return {
		base: { version: base.version, label: base.label, method: base.method },
		fields: methodToFields(base.method),
		practiceNames: Object.fromEntries(PRACTICE_CATALOG.map((p) => [p.code, p.name]))
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async ({ request, locals }) => {
		const fd = await request.formData();
		const fields = formDataToFields(fd);
		const base = await baseMethod(fields.from ?? null);
		const result = fieldsToMethod(base.method, fields);
		if (!result.ok) return fail(422, { errors: result.errors, fields });
		const actor = actorOf(locals.principal!);
		try {
			await createMethod(getDb(), result.method, actor);
			if (fields.activate === 'on') await setActiveMethod(getDb(), result.method.version, actor);
		} catch (e) {
			if (e instanceof ApiError) {
				const errors: Record<string, string> = {};
				for (const fe of e.init.errors ?? []) errors[fe.pointer === '/version' ? 'version' : 'form'] ??= fe.detail;
				if (Object.keys(errors).length === 0) errors.form = e.init.detail ?? 'Could not store the method.';
				if (errors.version === 'already exists')
					errors.version = 'That version already exists; stored versions never change. Pick a new name.';
				return fail(e.init.status, { errors, fields });
			}
			throw e;
		}
		redirect(303, `/methods?version=${encodeURIComponent(result.method.version)}&created=1`);
	}
} satisfies Actions;

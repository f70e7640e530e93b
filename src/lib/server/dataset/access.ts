// Who may publish or withdraw a release (a `dataset:read` token of a manager or admin), and JSON bodies.
import type { z } from 'zod';
import type { Principal } from '../auth/principal';
import { readSmallBody } from '../http/body';
import { ApiError } from '../http/problem';

export function requireReleaseManager(p: Principal | null | undefined): Principal {
	if (!p) throw new ApiError({ status: 401, detail: 'Sign in or send a token.' });
	if (p.role !== 'manager' && p.role !== 'admin') {
		throw new ApiError({
			status: 403,
			type: 'role-required',
			detail: 'Only a state program manager or an administrator may publish or withdraw a release.'
		});
	}
	return p;
}

export async function readJsonBody<T extends z.ZodType>(request: Request, schema: T): Promise<z.infer<T>> {
	let raw: unknown;
	try {
		raw = JSON.parse((await readSmallBody(request, 64 * 1024)) || '{}');
	} catch {
		throw new ApiError({ status: 400, type: 'invalid-json', detail: 'The body is not JSON.' });
	}
	const parsed = schema.safeParse(raw);
	if (!parsed.success) {
		throw new ApiError({
			status: 422,
			type: 'invalid-body',
			detail: 'The body is not valid.',
			errors: parsed.error.issues.map((i) => ({ pointer: `/${i.path.join('/')}`, detail: i.message }))
		});
	}
	return parsed.data;
}

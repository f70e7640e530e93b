// Small helpers to read query parameters; anything malformed is a 400 problem naming the parameter.
import { ApiError } from './problem';

export function enumParam<T extends string>(url: URL, name: string, values: readonly T[]): T | null {
	const raw = url.searchParams.get(name);
	if (raw === null || raw === '') return null;
	if ((values as readonly string[]).includes(raw)) return raw as T;
	throw new ApiError({
		status: 400,
		type: 'invalid-parameter',
		detail: `${name} must be one of: ${values.join(', ')}.`,
		errors: [{ pointer: `#/query/${name}`, detail: `expected one of ${values.join(', ')}` }]
	});
}

export function patternParam(url: URL, name: string, pattern: RegExp, expected: string): string | null {
	const raw = url.searchParams.get(name);
	if (raw === null || raw === '') return null;
	if (pattern.test(raw)) return raw;
	throw new ApiError({
		status: 400,
		type: 'invalid-parameter',
		detail: `${name} must be ${expected}.`,
		errors: [{ pointer: `#/query/${name}`, detail: `expected ${expected}` }]
	});
}

// Form helpers for SvelteKit actions: zod issues → one message per field, keyed by dotted path
// (`contacts.1.email`), ready to show beside the field.
import type { z } from 'zod';

export type FieldErrors = Record<string, string>;

export function fieldErrors(error: z.ZodError): FieldErrors {
	const out: FieldErrors = {};
	for (const issue of error.issues) {
		const key = issue.path.map(String).join('.') || '_form';
		out[key] ??= issue.message;
	}
	return out;
}

/** Plain object of a form's single-valued fields (for parsing and for refilling the form). */
export function formValues(form: FormData, multi: string[] = []): Record<string, unknown> {
	const out: Record<string, unknown> = {};
	for (const [k, v] of form) {
		if (typeof v !== 'string') continue;
		if (multi.includes(k)) ((out[k] ??= []) as string[]).push(v);
		else out[k] = v;
	}
	for (const k of multi) out[k] ??= [];
	return out;
}

// Input shapes of the accounts area: sign-in, passwords, invitations, users, districts and API tokens.
// The forms and the API validate with these; field names are snake_case like the API.
import { z } from 'zod';
import { ROLES, SCOPES } from '$lib/domain/scopes';

export const PASSWORD_MIN = 10;
export const PASSWORD_MAX = 200;

export const emailField = z
	.string({ error: 'Enter an e-mail address.' })
	.trim()
	.toLowerCase()
	.max(254, 'This e-mail address is too long.')
	.pipe(z.email({ error: 'Enter an e-mail address like name@example.org.' }));

const newPassword = z
	.string({ error: 'Choose a password.' })
	.min(PASSWORD_MIN, `Use at least ${PASSWORD_MIN} characters.`)
	.max(PASSWORD_MAX, `Use at most ${PASSWORD_MAX} characters.`)
	.refine((p) => p.trim().length > 0, 'A password of spaces only is not allowed.');

export const signInSchema = z.object({
	email: z.string({ error: 'Enter your e-mail address.' }).trim().min(1, 'Enter your e-mail address.').max(254),
	password: z.string({ error: 'Enter your password.' }).min(1, 'Enter your password.').max(PASSWORD_MAX)
});

export const forgotPasswordSchema = z.object({ email: emailField });

export const newPasswordSchema = z
	.object({ password: newPassword, confirm: z.string({ error: 'Type the password again.' }) })
	.refine((v) => v.password === v.confirm, { path: ['confirm'], error: 'The two passwords do not match.' });

export const changePasswordSchema = z
	.object({
		current: z.string({ error: 'Enter your current password.' }).min(1, 'Enter your current password.').max(PASSWORD_MAX),
		password: newPassword,
		confirm: z.string({ error: 'Type the new password again.' })
	})
	.refine((v) => v.password === v.confirm, { path: ['confirm'], error: 'The two passwords do not match.' })
	.refine((v) => v.password !== v.current, { path: ['password'], error: 'Choose a password different from the current one.' });

const personName = z.string({ error: 'Enter a name.' }).trim().min(1, 'Enter a name.').max(120, 'Use at most 120 characters.');
const roleField = z.enum(ROLES, { error: 'Choose a role.' });
const optionalId = z.preprocess(
	(v) => (v === '' || v === null || v === undefined ? null : Number(v)),
	z.number().int().positive().nullable()
);

const districtMatchesRole = (v: { role: string; district_id: number | null }, ctx: z.RefinementCtx) => {
	if (v.role === 'district' && v.district_id === null)
		ctx.addIssue({ code: 'custom', path: ['district_id'], message: 'District staff need a district.' });
};

export const inviteSchema = z
	.object({ name: personName, email: emailField, role: roleField, district_id: optionalId })
	.superRefine(districtMatchesRole)
	.transform((v) => ({ ...v, district_id: v.role === 'district' ? v.district_id : null }));

export const userUpdateSchema = z
	.object({ name: personName, role: roleField, district_id: optionalId })
	.superRefine(districtMatchesRole)
	.transform((v) => ({ ...v, district_id: v.role === 'district' ? v.district_id : null }));

/** Expiry choices on the account page, in days (empty: never). */
export const TOKEN_EXPIRY_DAYS = [7, 30, 90, 365] as const;

export const tokenName = z
	.string({ error: 'Name the token.' })
	.trim()
	.min(1, 'Name the token, e.g. "nightly upload".')
	.max(80, 'Use at most 80 characters.');

/** POST /api/v1/tokens body. */
export const tokenCreateSchema = z.object({
	name: tokenName,
	scopes: z
		.array(z.string())
		.min(1, 'Ask for at least one scope.')
		.max(SCOPES.length * 2),
	expires_at: z.iso
		.datetime({ offset: true, error: 'Give an ISO 8601 date-time, e.g. 2027-06-30T00:00:00Z.' })
		.nullable()
		.optional()
		.transform((s) => (s ? new Date(s) : null))
});

/** The account page's token form. */
export const tokenFormSchema = z.object({
	name: tokenName,
	scopes: z.array(z.string()).min(1, 'Choose at least one scope.'),
	expires_in_days: z.preprocess(
		(v) => (v === '' || v === undefined || v === null ? null : Number(v)),
		z.number().int().min(1).max(3650).nullable()
	)
});

const contactSchema = z.object({
	name: z.string().trim().min(1, 'Enter the contact’s name.').max(120),
	title: z.string().trim().max(120).optional(),
	email: emailField,
	phone: z
		.string()
		.trim()
		.max(40)
		.regex(/^[0-9+().\s/-]*$/, 'Use digits, spaces and + ( ) - only.')
		.optional()
});

export const districtCodeField = z
	.string({ error: 'Enter a code.' })
	.trim()
	.toUpperCase()
	.regex(/^[A-Z0-9]{2,8}$/, 'Use 2 to 8 letters or digits.');

export const districtCreateSchema = z.object({
	code: districtCodeField,
	name: z.string().trim().min(1, 'Enter the district’s name.').max(160),
	region: z.string().trim().max(80).default('')
});

export const districtUpdateSchema = z.object({
	name: z.string().trim().min(1, 'Enter the district’s name.').max(160),
	region: z.string().trim().max(80).default(''),
	counties: z.array(z.string().regex(/^\d{5}$/, 'Not a county FIPS code.')).max(200),
	contacts: z.array(contactSchema).max(20, 'At most 20 contacts.'),
	notify_on_rejected: z.boolean()
});

export type DistrictUpdate = z.infer<typeof districtUpdateSchema>;

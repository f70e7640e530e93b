// The JSON shapes the accounts API answers with (snake_case).
import type { TokenRow } from './api-tokens';
import type { DistrictSummary } from './districts';

export function tokenJson(t: TokenRow) {
	return {
		id: t.id,
		name: t.name,
		prefix: t.prefix,
		scopes: t.scopes,
		status: t.status,
		created_at: t.createdAt.toISOString(),
		last_used_at: t.lastUsedAt?.toISOString() ?? null,
		expires_at: t.expiresAt?.toISOString() ?? null,
		revoked_at: t.revokedAt?.toISOString() ?? null
	};
}

export function districtJson(d: DistrictSummary) {
	return {
		code: d.code,
		name: d.name,
		region: d.region,
		counties: d.counties.map((c) => ({ fips: c.fips, name: c.name })),
		contacts: d.contacts.map((c) => ({ name: c.name, title: c.title ?? null, email: c.email, phone: c.phone ?? null })),
		notify_on_rejected: d.notifyOnRejected
	};
}

// The permission decision (one table, src/lib/server/auth/permissions.ts), including district-scoped
// paths. Scope refusals follow RFC 6750 §3.1 (insufficient_scope → 403).
import { describe, expect, it } from 'vitest';
import { ROLE_SCOPES, type Role } from '../../src/lib/domain/scopes';
import { decide, decideDistrict } from '../../src/lib/server/auth/authorize';
import { access, PERMISSIONS, ruleFor } from '../../src/lib/server/auth/permissions';
import type { Principal } from '../../src/lib/server/auth/principal';

const who = (role: Role, districtId: number | null = null, scopes = [...ROLE_SCOPES[role]]): Principal => ({
	kind: 'token',
	userId: 1,
	email: 'x@runnel.test',
	name: 'X',
	role,
	districtId,
	scopes,
	credentialId: '1',
	expiresAt: null
});

describe('decide', () => {
	it('public, signed-in, scope and roles rules', () => {
		expect(decide(access.public, null)).toEqual({ ok: true });
		expect(decide(access.signedIn, null)).toEqual({ ok: false, reason: 'unauthenticated' });
		expect(decide(access.scope('records:write'), who('researcher'))).toEqual({
			ok: false,
			reason: 'insufficient_scope',
			scope: 'records:write'
		});
		expect(decide(access.scope('records:write'), who('district', 1))).toEqual({ ok: true });
		expect(decide(access.roles('admin'), who('manager'))).toEqual({ ok: false, reason: 'forbidden_role' });
	});

	it('admin pages need the admin scope, so an admin token without it is refused', () => {
		const rule = ruleFor('/admin/users', 'GET')!;
		expect(decide(rule, who('admin'))).toEqual({ ok: true });
		expect(decide(rule, who('admin', null, ['records:read']))).toMatchObject({ ok: false, reason: 'insufficient_scope' });
		expect(decide(rule, who('manager'))).toMatchObject({ ok: false });
	});
});

describe('decideDistrict', () => {
	const rule = access.ownDistrict(access.scope('records:read'), 'code');
	it('a district principal reaches only its own district', () => {
		expect(decideDistrict(rule, who('district', 7), 7)).toEqual({ ok: true });
		expect(decideDistrict(rule, who('district', 7), 8)).toEqual({ ok: false, reason: 'other_district' });
		expect(decideDistrict(rule, who('district', 7), null)).toEqual({ ok: false, reason: 'other_district' });
	});
	it('principals not bound to a district, and rules without a district parameter, pass', () => {
		expect(decideDistrict(rule, who('manager'), 8)).toEqual({ ok: true });
		expect(decideDistrict(access.scope('records:read'), who('district', 7), 8)).toEqual({ ok: true });
	});
	it('the district API route is marked district-scoped in the table', () => {
		expect(PERMISSIONS['/api/v1/districts/[code]'].GET?.districtParam).toBe('code');
	});
});

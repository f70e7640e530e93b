import { describe, expect, it } from 'vitest';
import { checkRequestedScopes, ROLE_SCOPES, SCOPES } from '../../src/lib/domain/scopes';

describe('role scopes (product brief, "Roles and scopes")', () => {
	it('admin holds every scope; others hold only their own', () => {
		expect([...ROLE_SCOPES.admin].sort()).toEqual([...SCOPES].sort());
		expect(ROLE_SCOPES.manager).not.toContain('records:write');
		expect(ROLE_SCOPES.researcher).toEqual(['dataset:read', 'rollups:read']);
		expect(ROLE_SCOPES.district).not.toContain('dataset:read');
	});

	it('a token may only ask for scopes of its role', () => {
		expect(checkRequestedScopes('researcher', ['dataset:read', 'records:write', 'bogus'])).toEqual({
			ok: ['dataset:read'],
			refused: ['records:write', 'bogus']
		});
		expect(checkRequestedScopes('district', ['records:write', 'records:write'])).toEqual({ ok: ['records:write'], refused: [] });
	});
});

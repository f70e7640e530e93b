import type { Role, Scope } from '$lib/domain/scopes';

/** Who is calling: a signed-in person (session), a personal API token, or an OAuth client. */
export interface Principal {
	kind: 'session' | 'token' | 'client';
	userId: number | null;
	email: string | null;
	name: string;
	role: Role;
	/** Set for the `district` role: the one district this principal may read and write. */
	districtId: number | null;
	scopes: Scope[];
	/** Token id, session id or OAuth client id, for audit and idempotency scoping. */
	credentialId: string;
	expiresAt: Date | null;
}

/** A stable actor string for version history and audit rows, e.g. `token:12` or `session:user:3`. */
export function actorOf(p: Principal): string {
	return p.kind === 'session' ? `user:${p.userId}` : `${p.kind}:${p.credentialId}`;
}

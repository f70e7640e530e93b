// Where to send someone after signing in: only a path on this site. Anything that could leave the
// site (`//host`, `/\host`, `https://…`, `javascript:`) or loop back into signing in falls back.

const PROBE_ORIGIN = 'http://runnel.invalid';
const NO_RETURN = ['/sign-in', '/sign-out'];

export function safeNextPath(next: string | null | undefined, fallback = '/'): string {
	if (!next || next.length > 2000) return fallback;
	// Browsers treat a backslash like a slash and drop tabs and newlines, so refuse them outright.
	if (!next.startsWith('/') || next.startsWith('//') || next.includes('\\') || hasControlCharacter(next)) return fallback;
	let url: URL;
	try {
		url = new URL(next, PROBE_ORIGIN);
	} catch {
		return fallback;
	}
	if (url.origin !== PROBE_ORIGIN) return fallback;
	if (NO_RETURN.some((p) => url.pathname === p || url.pathname.startsWith(p + '/'))) return fallback;
	return url.pathname + url.search + url.hash;
}

function hasControlCharacter(s: string): boolean {
	for (let i = 0; i < s.length; i++) {
		const c = s.charCodeAt(i);
		if (c < 0x20 || c === 0x7f) return true;
	}
	return false;
}

// Builds a query string from the members that have a value (empty, null and undefined are left out).
export function queryString(params: Record<string, string | number | null | undefined>): string {
	const out = new URLSearchParams();
	for (const [k, v] of Object.entries(params)) {
		if (v === null || v === undefined || v === '') continue;
		out.set(k, String(v));
	}
	return out.toString();
}

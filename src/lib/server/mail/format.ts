// Date-times as the admin pages show them: ISO for <time datetime>, and a fixed UTC rendering so the
// server-rendered text never differs from the browser's.
export function displayTime(d: Date | null): { iso: string; text: string } | null {
	if (!d) return null;
	const iso = d.toISOString();
	return { iso, text: `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC` };
}

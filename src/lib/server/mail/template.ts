// The one mail layout: every message Runnel sends has a plain-text and an HTML body built from the
// same content, carries the product name, and loads nothing from outside (no images, no web fonts,
// no remote CSS). Use `composeMail` to build what `queueMail` takes.
import type { MailKind, OutgoingMail } from './queue';

export interface MailContent {
	/** The message's heading, e.g. "You are invited to Runnel". */
	heading: string;
	/** Optional first line, e.g. "Hello Mara,". */
	greeting?: string;
	/** Body paragraphs, plain text (escaped in HTML; line breaks kept). */
	paragraphs: string[];
	/** One call to action: a button in HTML, the bare URL in text. Only http(s) URLs. */
	action?: { label: string; url: string };
	/** Small print under the action: why the person got this, when a link expires. */
	footnote?: string;
}

const PRODUCT = 'Runnel';
const TAGLINE = 'Conservation practice reporting hub';
// Colours of our theme (tailwind.config.ts): creek-900, creek-700, stone-600, stone-200.
const C = { header: '#162f37', accent: '#1f515e', muted: '#58554c', rule: '#dcdad3', page: '#f7f7f5' };

export function escapeHtml(s: string): string {
	return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

function checkUrl(url: string): string {
	const u = new URL(url);
	if (u.protocol !== 'https:' && u.protocol !== 'http:') throw new Error(`mail action URL must be http(s): ${url}`);
	return u.href;
}

export function renderText(c: MailContent): string {
	const out: string[] = [PRODUCT, '='.repeat(PRODUCT.length), '', c.heading, ''];
	if (c.greeting) out.push(c.greeting, '');
	for (const p of c.paragraphs) out.push(p, '');
	if (c.action) out.push(`${c.action.label}:`, checkUrl(c.action.url), '');
	if (c.footnote) out.push(c.footnote, '');
	out.push('-- ', `${PRODUCT} · ${TAGLINE}`);
	return out.join('\n') + '\n';
}

export function renderHtml(c: MailContent): string {
	const para = (p: string) =>
		`<p style="margin:0 0 16px;font-size:16px;line-height:1.5;color:#1c1c1a">${escapeHtml(p).replace(/\n/g, '<br>')}</p>`;
	const action = c.action
		? `<p style="margin:24px 0"><a href="${escapeHtml(checkUrl(c.action.url))}" style="display:inline-block;background:${C.accent};color:#ffffff;text-decoration:none;font-weight:600;padding:12px 20px;border-radius:6px">${escapeHtml(c.action.label)}</a></p>
<p style="margin:0 0 16px;font-size:13px;line-height:1.5;color:${C.muted}">If the button does not work, copy this address into your browser:<br><span style="word-break:break-all">${escapeHtml(checkUrl(c.action.url))}</span></p>`
		: '';
	return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(c.heading)}</title>
</head>
<body style="margin:0;padding:0;background:${C.page};font-family:'Public Sans',Helvetica,Arial,sans-serif">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:${C.page}">
<tr><td align="center" style="padding:24px 12px">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="max-width:600px;background:#ffffff;border:1px solid ${C.rule};border-radius:8px">
<tr><td style="background:${C.header};padding:16px 24px;border-radius:8px 8px 0 0;color:#ffffff;font-size:20px;font-weight:700;letter-spacing:0.5px">${PRODUCT}</td></tr>
<tr><td style="padding:24px">
<h1 style="margin:0 0 16px;font-size:22px;line-height:1.3;color:${C.header}">${escapeHtml(c.heading)}</h1>
${c.greeting ? para(c.greeting) : ''}${c.paragraphs.map(para).join('\n')}
${action}${c.footnote ? `<p style="margin:16px 0 0;font-size:13px;line-height:1.5;color:${C.muted}">${escapeHtml(c.footnote)}</p>` : ''}
</td></tr>
<tr><td style="padding:12px 24px;border-top:1px solid ${C.rule};font-size:12px;color:${C.muted}">${PRODUCT} · ${TAGLINE}</td></tr>
</table>
</td></tr>
</table>
</body>
</html>
`;
}

/** Text and HTML bodies of one message. */
export function renderMail(c: MailContent): { text: string; html: string } {
	return { text: renderText(c), html: renderHtml(c) };
}

/** A message ready for `queueMail`: `queueMail(db, composeMail('invitation', [email], subject, content))`. */
export function composeMail(kind: MailKind, to: string[], subject: string, content: MailContent): OutgoingMail {
	return { kind, to, subject, ...renderMail(content) };
}

// The invitation and password-reset messages: plain text and a simple HTML version, our product name,
// no external images or styles (inline only), links built from ORIGIN by the caller.
import { ROLE_LABELS, type Role } from '$lib/domain/scopes';
import type { OutgoingMail } from '../mail/queue';

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

const when = (d: Date) =>
	d.toLocaleString('en-US', { dateStyle: 'long', timeStyle: 'short', timeZone: 'UTC' }).replace(/ at /, ', ') + ' UTC';

function html(title: string, paragraphs: string[], link: { href: string; label: string }, footer: string): string {
	return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${esc(title)}</title></head>
<body style="margin:0;padding:24px;background:#f7f7f5;font-family:Arial,Helvetica,sans-serif;color:#22211e">
<div style="max-width:560px;margin:0 auto;background:#ffffff;border:1px solid #dcdad3;border-radius:8px;padding:24px">
<p style="margin:0 0 16px;font-size:20px;font-weight:bold;color:#162f37">Runnel</p>
<h1 style="margin:0 0 16px;font-size:20px;color:#162f37">${esc(title)}</h1>
${paragraphs.map((p) => `<p style="margin:0 0 12px;line-height:1.5">${esc(p)}</p>`).join('\n')}
<p style="margin:20px 0"><a href="${esc(link.href)}" style="display:inline-block;background:#1f515e;color:#ffffff;padding:10px 18px;border-radius:6px;text-decoration:none;font-weight:bold">${esc(link.label)}</a></p>
<p style="margin:0 0 12px;font-size:13px;color:#58554c">If the button does not work, copy this address into your browser:<br><span style="word-break:break-all">${esc(link.href)}</span></p>
<p style="margin:16px 0 0;font-size:13px;color:#58554c">${esc(footer)}</p>
</div></body></html>`;
}

export function invitationMail(opts: {
	to: string;
	name: string;
	role: Role;
	districtName: string | null;
	invitedBy: string;
	url: string;
	expiresAt: Date;
}): OutgoingMail {
	const roleText = ROLE_LABELS[opts.role] + (opts.districtName ? ` for ${opts.districtName}` : '');
	const intro = `${opts.invitedBy} has invited you to Runnel, the hub where conservation districts report the water-quality practices they install, as ${roleText}.`;
	const step = `Choose your password with the link below. It works once and until ${when(opts.expiresAt)}.`;
	const footer = 'If you did not expect this invitation, you can ignore this message; no account is usable until the link is followed.';
	return {
		kind: 'invitation',
		to: [opts.to],
		subject: 'You are invited to Runnel',
		text: `Hello ${opts.name},\n\n${intro}\n\n${step}\n\n${opts.url}\n\n${footer}\n\n— Runnel\n`,
		html: html('You are invited to Runnel', [`Hello ${opts.name},`, intro, step], { href: opts.url, label: 'Choose your password' }, footer)
	};
}

export function passwordResetMail(opts: { to: string; name: string; url: string; expiresAt: Date }): OutgoingMail {
	const intro = 'Someone asked to reset the password of your Runnel account. If it was you, choose a new password with the link below.';
	const step = `The link works once and until ${when(opts.expiresAt)}. Choosing a new password signs you out everywhere.`;
	const footer = 'If you did not ask for this, ignore this message: your password stays as it is.';
	return {
		kind: 'password-reset',
		to: [opts.to],
		subject: 'Reset your Runnel password',
		text: `Hello ${opts.name},\n\n${intro}\n\n${step}\n\n${opts.url}\n\n${footer}\n\n— Runnel\n`,
		html: html(
			'Reset your Runnel password',
			[`Hello ${opts.name},`, intro, step],
			{ href: opts.url, label: 'Choose a new password' },
			footer
		)
	};
}

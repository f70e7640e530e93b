// The fake SMTP server's MIME reader, checked on messages nodemailer itself composes (the sender's
// real output) and on the worked examples of the RFCs it implements.
import nodemailer, { type SendMailOptions } from 'nodemailer';
import { describe, expect, it } from 'vitest';
import { decodeEncodedWords, decodeQuotedPrintable, parseHeaderParams, parseMail } from '../../src/lib/server/mail/mime';

async function compose(mail: SendMailOptions): Promise<Buffer> {
	const t = nodemailer.createTransport({ streamTransport: true, buffer: true, newline: 'windows' });
	const info = await t.sendMail(mail);
	return info.message as Buffer;
}

describe('parseMail on messages nodemailer composes', () => {
	it('reads subject, from, to, Message-ID and both bodies of a multipart/alternative message', async () => {
		const raw = await compose({
			from: 'Runnel <no-reply@runnel.test>',
			to: ['mara.quillfeather@bluestem.example.org', 'ansel@kettleprairie.example.org'],
			subject: 'Batch 42 checked',
			messageId: '<outbox-1.abc@runnel.test>',
			text: 'Hello,\n\n3 rows were rejected.\n',
			html: '<p>Hello,</p><p>3 rows were <strong>rejected</strong>.</p>'
		});
		const p = parseMail(raw);
		expect(p.subject).toBe('Batch 42 checked');
		expect(p.from).toBe('Runnel <no-reply@runnel.test>');
		expect(p.to).toBe('mara.quillfeather@bluestem.example.org, ansel@kettleprairie.example.org');
		expect(p.messageId).toBe('<outbox-1.abc@runnel.test>');
		expect(p.text?.replace(/\r\n/g, '\n')).toBe('Hello,\n\n3 rows were rejected.\n');
		expect(p.html).toBe('<p>Hello,</p><p>3 rows were <strong>rejected</strong>.</p>');
	});

	it('decodes non-ASCII subjects and quoted-printable bodies with long lines', async () => {
		const long = 'Zuckerrübe, café, naïve — '.repeat(20).trim();
		const raw = await compose({
			from: 'Runnel <no-reply@runnel.test>',
			to: 'person@example.org',
			subject: 'Résumé of returned records — “Kettle Prairie” ✓',
			text: long,
			html: `<p>${long}</p>`
		});
		// nodemailer encoded the subject (RFC 2047) and the bodies (quoted-printable, lines ≤ 76).
		expect(raw.toString('latin1')).toMatch(/Subject: =\?UTF-8\?/);
		expect(raw.toString('latin1')).toMatch(/Content-Transfer-Encoding: quoted-printable/);
		const p = parseMail(raw);
		expect(p.subject).toBe('Résumé of returned records — “Kettle Prairie” ✓');
		expect(p.text).toBe(long);
		expect(p.html).toBe(`<p>${long}</p>`);
	});

	it('reads base64 parts and skips attachments', async () => {
		const raw = await compose({
			from: 'a@example.org',
			to: 'b@example.org',
			subject: 'plain',
			text: 'Only text ✓',
			textEncoding: 'base64',
			attachments: [{ filename: 'report.txt', content: 'not the body', contentType: 'text/plain' }]
		});
		const p = parseMail(raw);
		expect(p.text).toBe('Only text ✓');
		expect(p.html).toBeNull();
	});
});

describe('RFC examples', () => {
	// RFC 2047 §8 (Examples): encoded words and the white space between adjacent ones.
	it.each([
		['=?ISO-8859-1?Q?a?=', 'a'],
		['=?ISO-8859-1?Q?a?= b', 'a b'],
		['=?ISO-8859-1?Q?a?= =?ISO-8859-1?Q?b?=', 'ab'],
		['=?ISO-8859-1?Q?a?=  =?ISO-8859-1?Q?b?=', 'ab'],
		['=?ISO-8859-1?Q?a_b?=', 'a b'],
		['=?ISO-8859-1?Q?a?= =?ISO-8859-2?Q?_b?=', 'a b'],
		['=?US-ASCII?Q?Keith_Moore?= <moore@cs.utk.edu>', 'Keith Moore <moore@cs.utk.edu>'],
		['=?ISO-8859-1?Q?Andr=E9?= Pirard <PIRARD@vm1.ulg.ac.be>', 'André Pirard <PIRARD@vm1.ulg.ac.be>'],
		[
			'=?ISO-8859-1?B?SWYgeW91IGNhbiByZWFkIHRoaXMgeW8=?= =?ISO-8859-2?B?dSB1bmRlcnN0YW5kIHRoZSBleGFtcGxlLg==?=',
			'If you can read this you understand the example.'
		]
	])('%s → %s', (encoded, decoded) => {
		expect(decodeEncodedWords(encoded)).toBe(decoded);
	});

	// RFC 2045 §6.7: `=XX` octets, soft line breaks, trailing white space removed.
	it('decodes quoted-printable (RFC 2045 §6.7)', () => {
		expect(decodeQuotedPrintable("Now's the time =\r\nfor all folk to come=\r\n to the aid").toString()).toBe(
			"Now's the time for all folk to come to the aid"
		);
		expect(decodeQuotedPrintable('caf=C3=A9').toString('utf8')).toBe('café');
		expect(decodeQuotedPrintable('trailing   \r\nnext').toString()).toBe('trailing\r\nnext');
	});

	// RFC 2045 §5.1: parameters, quoted strings, case-insensitive type.
	it('reads Content-Type parameters (RFC 2045 §5.1)', () => {
		expect(parseHeaderParams('Multipart/Alternative; boundary="--_b; x"; charset=utf-8')).toEqual({
			value: 'multipart/alternative',
			params: { boundary: '--_b; x', charset: 'utf-8' }
		});
	});
});

/*
 * A mail's body written once as blocks and rendered twice: as plain text and as plain,
 * accessible HTML with the same words. Everything that goes into the HTML is escaped, since
 * notes and session names are typed by people; links are only ever http(s) addresses that
 * Lockstep made itself.
 */

export type MailBlock =
	/** A paragraph of Lockstep's own words. */
	| { kind: 'text'; text: string }
	/** Words somebody typed, after a label of ours ("Note", "What to look at"). */
	| { kind: 'quote'; label: string; text: string }
	| { kind: 'list'; heading: string; items: string[] }
	| { kind: 'link'; label: string; href: string };

export interface MailBody {
	text: string;
	html: string;
}

const ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

export function escapeHtml(text: string): string {
	return text.replace(/[&<>"']/g, (c) => ENTITIES[c]);
}

/** Line breaks a person typed stay line breaks. */
const escapedLines = (text: string) => escapeHtml(text).replace(/\r?\n/g, '<br>\n');

function textOf(block: MailBlock): string {
	switch (block.kind) {
		case 'text':
			return block.text;
		case 'quote':
			return `${block.label}: ${block.text}`;
		case 'list':
			return [block.heading, ...block.items.map((item) => `  • ${item}`)].join('\n');
		case 'link':
			return `${block.label}: ${block.href}`;
	}
}

function htmlOf(block: MailBlock): string {
	switch (block.kind) {
		case 'text':
			return `<p>${escapedLines(block.text)}</p>`;
		case 'quote':
			return `<p>${escapeHtml(block.label)}:</p>\n<blockquote style="margin:0 0 1em;padding-left:12px;border-left:3px solid #8a94a3">${escapedLines(block.text)}</blockquote>`;
		case 'list':
			return `<p>${escapeHtml(block.heading)}</p>\n<ul>\n${block.items.map((item) => `<li>${escapedLines(item)}</li>`).join('\n')}\n</ul>`;
		case 'link':
			if (!/^https?:\/\//.test(block.href)) throw new Error(`A mail link must be an http(s) address, not ${block.href}.`);
			return `<p>${escapeHtml(block.label)}: <a href="${escapeHtml(block.href)}">${escapeHtml(block.href)}</a></p>`;
	}
}

/** "Hello <name>," and "— Lockstep" around the blocks, in both forms. */
export function composeMail(subject: string, recipientName: string, blocks: MailBlock[]): MailBody {
	const all: MailBlock[] = [{ kind: 'text', text: `Hello ${recipientName},` }, ...blocks, { kind: 'text', text: '— Lockstep' }];
	const text = all.map(textOf).join('\n\n');
	const html = [
		'<!doctype html>',
		'<html lang="en">',
		`<head><meta charset="utf-8"><meta name="viewport" content="width=device-width"><title>${escapeHtml(subject)}</title></head>`,
		'<body style="margin:0;padding:16px;font-family:Inter,Arial,sans-serif;font-size:15px;line-height:1.5;color:#15171b;background:#ffffff">',
		...all.map(htmlOf),
		'</body>',
		'</html>'
	].join('\n');
	return { text, html };
}

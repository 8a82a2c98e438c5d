import { describe, expect, it } from 'vitest';
import { composeMail, escapeHtml } from './mail-body';

describe('composeMail', () => {
	const typed = 'Mid cam <b>late</b> & "odd" at 12 s\nsee frame 438';
	const body = composeMail('Sent back: Yard <test>', 'Eli', [
		{ kind: 'text', text: 'Rae sent “Yard <script>alert(1)</script>” back to aligned.' },
		{ kind: 'quote', label: 'What to look at', text: typed },
		{ kind: 'list', heading: 'Spot checks of this revision:', items: ['12.000 s: in sync (“<i>ok</i>”)'] },
		{ kind: 'link', label: 'Review', href: 'http://127.0.0.1:4173/sessions/abc/review?x=1&y=2' }
	]);

	it('escapes everything a person typed in the HTML, names and notes alike', () => {
		expect(body.html).not.toMatch(/<script>|<b>|<i>/);
		expect(body.html).toContain('Yard &lt;script&gt;alert(1)&lt;/script&gt;');
		expect(body.html).toContain('Mid cam &lt;b&gt;late&lt;/b&gt; &amp; &quot;odd&quot; at 12 s<br>');
		expect(body.html).toContain('<title>Sent back: Yard &lt;test&gt;</title>');
		expect(body.html).toContain('<li>12.000 s: in sync (“&lt;i&gt;ok&lt;/i&gt;”)</li>');
	});

	it('links to the session in the HTML and names the same address in the text', () => {
		expect(body.html).toContain('Review: <a href="http://127.0.0.1:4173/sessions/abc/review?x=1&amp;y=2">');
		expect(body.text).toContain('Review: http://127.0.0.1:4173/sessions/abc/review?x=1&y=2');
	});

	it('says the same words in both versions', () => {
		const wordsOf = (text: string) => text.replace(/\s+/g, ' ').trim();
		// The HTML read as a person sees it: tags dropped, entities read back.
		const seen = body.html
			.replace(/<head>[\s\S]*<\/head>/, '')
			.replace(/<a href="[^"]*">[^<]*<\/a>/g, (a) => a.replace(/<[^>]+>/g, ''))
			.replace(/<[^>]+>/g, ' ')
			.replace(/&lt;/g, '<')
			.replace(/&gt;/g, '>')
			.replace(/&quot;/g, '"')
			.replace(/&#39;/g, "'")
			.replace(/&amp;/g, '&');
		expect(wordsOf(seen.replace(/•/g, ''))).toBe(wordsOf(body.text.replace(/•/g, '')));
		expect(body.text.startsWith('Hello Eli,\n\n')).toBe(true);
		expect(body.text.endsWith('\n\n— Lockstep')).toBe(true);
	});

	it('refuses a link that is not an http(s) address', () => {
		expect(() => composeMail('s', 'Eli', [{ kind: 'link', label: 'Open', href: 'javascript:alert(1)' }])).toThrow(/http\(s\)/);
		expect(escapeHtml(`'`)).toBe('&#39;');
	});
});

import { JSDOM } from 'jsdom';
import { describe, expect, test } from 'vitest';
import { renderMarkdown } from '../../src/lib/server/text/markdown';

/** Parses the output in a real DOM (jsdom) and lists what could run: scripts, handlers, script URLs. */
function activeContent(html: string): string[] {
	const { document } = new JSDOM(`<body>${html}</body>`).window;
	const found: string[] = [];
	for (const element of document.body.querySelectorAll('*')) {
		if (
			['SCRIPT', 'IFRAME', 'OBJECT', 'EMBED', 'STYLE', 'FORM', 'SVG', 'MATH'].includes(element.tagName.toUpperCase())
		) {
			found.push(element.tagName);
		}
		for (const attribute of element.attributes) {
			if (/^on/i.test(attribute.name)) found.push(`${element.tagName}[${attribute.name}]`);
			if (/^\s*(javascript|vbscript|data):/i.test(attribute.value))
				found.push(`${element.tagName}[${attribute.name}=${attribute.value}]`);
		}
	}
	return found;
}

describe('user-written Markdown', () => {
	test('ordinary Markdown renders', () => {
		const html = renderMarkdown(
			'Refit with **Gaia DR3** parallaxes; see [the note](https://example.org/note).\n\n- one\n- two'
		);
		expect(html).toContain('<strong>Gaia DR3</strong>');
		expect(html).toContain('<a href="https://example.org/note" rel="nofollow noopener noreferrer">the note</a>');
		expect(html).toContain('<li>two</li>');
	});

	// Payloads in the style of the OWASP XSS filter evasion cheat sheet (common practice).
	test.each([
		'<script>alert(1)</script>',
		'<img src=x onerror="alert(1)">',
		'[click](javascript:alert(1))',
		'[click](JaVaScRiPt:alert(1))',
		'<a href="javascript:alert(1)">x</a>',
		'<svg onload="alert(1)"><circle/></svg>',
		'<iframe src="https://example.org"></iframe>',
		'<div onclick="alert(1)">text</div>',
		'[data](data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==)',
		'<p style="background:url(javascript:alert(1))">styled</p>',
		'<form action="/sign-out"><button>go</button></form>'
	])('%s renders inert', (payload) => {
		const html = renderMarkdown(payload);
		expect(activeContent(html)).toEqual([]);
		expect(html).not.toMatch(/javascript:|onerror|onload|onclick|<script/i);
	});
});

import createDOMPurify from 'dompurify';
import { JSDOM } from 'jsdom';
import { Marked } from 'marked';

/**
 * User-written Markdown (proposal rationales, comments) rendered to HTML on the server and sanitised
 * with DOMPurify, so scripts, event-handler attributes and `javascript:` links never reach a page.
 */
const marked = new Marked({ gfm: true, breaks: false, async: false });
const purifier = createDOMPurify(new JSDOM('').window);

const ALLOWED_TAGS = [
	'p',
	'br',
	'hr',
	'h1',
	'h2',
	'h3',
	'h4',
	'h5',
	'h6',
	'blockquote',
	'pre',
	'code',
	'em',
	'strong',
	'del',
	'ul',
	'ol',
	'li',
	'a',
	'table',
	'thead',
	'tbody',
	'tr',
	'th',
	'td',
	'sub',
	'sup'
];

purifier.addHook('afterSanitizeAttributes', (node) => {
	// Links written by users open without giving the target page a handle on ours.
	if (node.tagName === 'A' && node.getAttribute('href')) {
		node.setAttribute('rel', 'nofollow noopener noreferrer');
	}
});

/** Markdown → safe HTML. Images and raw HTML beyond the allowed tags are dropped. */
export function renderMarkdown(source: string): string {
	const html = marked.parse(source) as string;
	return purifier.sanitize(html, {
		ALLOWED_TAGS,
		ALLOWED_ATTR: ['href', 'title', 'align', 'rel'],
		ALLOWED_URI_REGEXP: /^(?:https?:|mailto:|#|\/(?!\/))/i
	});
}

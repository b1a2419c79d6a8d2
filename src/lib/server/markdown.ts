/**
 * Guide markdown to safe HTML: marked renders (GitHub-flavoured, no raw HTML trusted),
 * sanitize-html keeps a short allow-list of tags and attributes and forces links to be
 * http(s)/mailto/relative with rel="nofollow noopener" on external ones. Shared by the
 * public guide pages and the curator's editor preview.
 */
import { Marked } from 'marked';
import sanitizeHtml from 'sanitize-html';

const marked = new Marked({ gfm: true, breaks: false, async: false });

const ALLOWED: sanitizeHtml.IOptions = {
	allowedTags: [
		'h2',
		'h3',
		'h4',
		'p',
		'a',
		'ul',
		'ol',
		'li',
		'strong',
		'em',
		'code',
		'pre',
		'blockquote',
		'hr',
		'br',
		'table',
		'thead',
		'tbody',
		'tr',
		'th',
		'td',
		'del',
		'img'
	],
	allowedAttributes: {
		a: ['href', 'title', 'rel'],
		img: ['src', 'alt', 'title'],
		th: ['scope', 'align'],
		td: ['align']
	},
	allowedSchemes: ['http', 'https', 'mailto'],
	allowedSchemesByTag: { img: ['https'] },
	allowedSchemesAppliedToAttributes: ['href', 'src'],
	allowProtocolRelative: false,
	// A guide's title is the page's h1: demote any h1 in the body to h2.
	transformTags: {
		h1: 'h2',
		a: (tagName, attribs) => {
			const external = /^https?:\/\//i.test(attribs.href ?? '');
			return { tagName, attribs: external ? { ...attribs, rel: 'nofollow noopener' } : attribs };
		}
	}
};

/** Render guide markdown to sanitised HTML. */
export function renderMarkdown(source: string): string {
	const html = marked.parse(source ?? '') as string;
	return sanitizeHtml(html, ALLOWED);
}

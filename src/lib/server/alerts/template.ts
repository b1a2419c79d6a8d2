/**
 * A tiny HTML template tag for e-mails: every interpolated value is escaped unless it is
 * already a SafeHtml (another template's output). Arrays are joined.
 */
import { escapeHtml } from '../mail/escape';

export class SafeHtml {
	constructor(readonly value: string) {}
	toString() {
		return this.value;
	}
}

function render(part: unknown): string {
	if (part == null || part === false) return '';
	if (part instanceof SafeHtml) return part.value;
	if (Array.isArray(part)) return part.map(render).join('');
	return escapeHtml(part);
}

/** html`<p>${name}</p>`: name is escaped; nested html`` results are not escaped twice. */
export function html(strings: TemplateStringsArray, ...values: unknown[]): SafeHtml {
	let out = strings[0];
	for (let i = 0; i < values.length; i++) out += render(values[i]) + strings[i + 1];
	return new SafeHtml(out);
}

/** The magic-link e-mail: our own words and look, data escaped. */
import { escapeHtml } from './escape';

export function signInMessage(url: string, host: string, expires: Date) {
	const minutes = Math.max(1, Math.round((expires.getTime() - Date.now()) / 60_000));
	const validFor = minutes >= 120 ? `${Math.round(minutes / 60)} hours` : `${minutes} minutes`;
	const subject = 'Your Scopegrade sign-in link';
	const text = [
		'Hello from Scopegrade.',
		'',
		'Open this link to sign in:',
		url,
		'',
		`The link works once and expires in ${validFor}.`,
		`If you did not ask to sign in at ${host}, ignore this message: nothing changes.`
	].join('\n');
	const html = `<!doctype html><html><body style="margin:0;background:#f4f3f0;font-family:system-ui,sans-serif;color:#1d1d1b">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0"><tr><td align="center" style="padding:32px 12px">
<table role="presentation" width="100%" style="max-width:480px;background:#ffffff;border:1px solid #dcd9d2;border-radius:10px" cellpadding="0" cellspacing="0">
<tr><td style="padding:24px 28px">
<p style="margin:0 0 4px;font-size:13px;letter-spacing:.08em;text-transform:uppercase;color:#b45309">Scopegrade</p>
<h1 style="margin:0 0 16px;font-size:20px">Sign in</h1>
<p style="margin:0 0 20px;line-height:1.5">Press the button to sign in to ${escapeHtml(host)}. The link works once and expires in ${escapeHtml(validFor)}.</p>
<p style="margin:0 0 24px"><a href="${escapeHtml(url)}" style="display:inline-block;background:#b45309;color:#ffffff;text-decoration:none;padding:10px 18px;border-radius:6px;font-weight:600">Sign in to Scopegrade</a></p>
<p style="margin:0;font-size:13px;color:#5c5a55;line-height:1.5">If you did not ask for this, ignore this message: nothing changes.</p>
</td></tr></table></td></tr></table></body></html>`;
	return { subject, text, html };
}

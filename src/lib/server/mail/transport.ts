/**
 * One place that knows how to reach the SMTP server (the local fake one in development
 * and tests, any SMTP server in production). Free of `$env` so jobs can use it.
 */
import nodemailer from 'nodemailer';

export interface SmtpConfig {
	host: string;
	port: number;
	secure: boolean;
	user?: string;
	pass?: string;
	from: string;
}

/** Read SMTP settings from an environment object (process.env or SvelteKit's env). */
export function smtpConfigFrom(env: Record<string, string | undefined>): SmtpConfig {
	return {
		host: env.SMTP_HOST || '127.0.0.1',
		port: Number(env.SMTP_PORT || 2525),
		secure: env.SMTP_SECURE === 'true',
		user: env.SMTP_USER || undefined,
		pass: env.SMTP_PASS || undefined,
		from: env.MAIL_FROM || 'Scopegrade <alerts@scopegrade.test>'
	};
}

/** Nodemailer transport options for a config (no TLS upgrade on the loopback fake). */
export function transportOptions(cfg: SmtpConfig) {
	const local = cfg.host === '127.0.0.1' || cfg.host === 'localhost';
	return {
		host: cfg.host,
		port: cfg.port,
		secure: cfg.secure,
		ignoreTLS: local && !cfg.secure,
		auth: cfg.user ? { user: cfg.user, pass: cfg.pass ?? '' } : undefined,
		connectionTimeout: 10_000,
		greetingTimeout: 10_000,
		socketTimeout: 20_000
	};
}

export function createTransport(cfg: SmtpConfig) {
	return nodemailer.createTransport(transportOptions(cfg));
}

/**
 * Auth.js: e-mail magic links through nodemailer, database sessions through the Drizzle
 * adapter. Roles live on the `user` row; ADMIN_EMAILS names addresses that become admin
 * when their account is first created.
 */
import { SvelteKitAuth } from '@auth/sveltekit';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import { DrizzleAdapter } from '@auth/drizzle-adapter';
import { eq } from 'drizzle-orm';
import { env } from '$env/dynamic/private';
import { db } from '$lib/server/db';
import { accounts, sessions, users, verificationTokens } from '$lib/server/db/schema';
import { createTransport, smtpConfigFrom, transportOptions } from '$lib/server/mail/transport';
import { signInMessage } from '$lib/server/mail/sign-in-message';
import { assertLinkOnOrigin, configuredOrigin } from '$lib/server/security/public-origin';
import { adminEmailsFrom } from './admins';

const smtp = smtpConfigFrom(env);

// Auth.js builds its URLs from AUTH_URL when set and from Host/X-Forwarded-Host otherwise;
// pin it to the configured public origin so a forged header can never steer a sign-in link.
const origin = configuredOrigin(env);
export const authOrigin = origin;
if (origin) (env as Record<string, string>).AUTH_URL = origin.origin;

export const {
	handle: authHandle,
	signIn,
	signOut
} = SvelteKitAuth({
	adapter: DrizzleAdapter(db, {
		usersTable: users,
		accountsTable: accounts,
		sessionsTable: sessions,
		verificationTokensTable: verificationTokens
	}),
	session: { strategy: 'database', maxAge: 30 * 24 * 3600 },
	// Safe only because AUTH_URL is pinned above and every link is checked against ORIGIN below.
	trustHost: true,
	logger: {
		// AUTH_URL plus SvelteKit's fixed /auth base path is what we want; drop that one notice.
		warn(code) {
			if (code !== 'env-url-basepath-redundant') console.warn(`[auth][warn] ${code}`);
		}
	},
	secret: env.AUTH_SECRET,
	pages: {
		signIn: '/signin',
		verifyRequest: '/signin/check-inbox',
		error: '/signin/problem'
	},
	providers: [
		Nodemailer({
			server: transportOptions(smtp),
			from: smtp.from,
			maxAge: 30 * 60,
			async sendVerificationRequest({ identifier, url, expires }) {
				assertLinkOnOrigin(url, origin);
				const message = signInMessage(url, new URL(url).host, expires);
				const info = await createTransport(smtp).sendMail({ to: identifier, from: smtp.from, ...message });
				if (info.rejected?.length) throw new Error(`could not send the sign-in link to ${identifier}`);
			}
		})
	],
	callbacks: {
		// Database sessions hand us the adapter's user row: pass id and role on to locals.
		session({ session, user }) {
			const role = (user as { role?: string }).role ?? 'member';
			return { ...session, user: { ...session.user, id: user.id, role } };
		}
	},
	events: {
		async createUser({ user }) {
			if (user.id && user.email && adminEmailsFrom(env.ADMIN_EMAILS).has(user.email.toLowerCase())) {
				await db.update(users).set({ role: 'admin' }).where(eq(users.id, user.id));
			}
		}
	}
});

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
import { adminEmailsFrom } from './admins';

const smtp = smtpConfigFrom(env);

export const { handle: authHandle, signIn, signOut } = SvelteKitAuth({
	adapter: DrizzleAdapter(db, {
		usersTable: users,
		accountsTable: accounts,
		sessionsTable: sessions,
		verificationTokensTable: verificationTokens
	}),
	session: { strategy: 'database', maxAge: 30 * 24 * 3600 },
	trustHost: true,
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

/**
 * The app's sign-in e-mail limits (per address and per client), shared by the /signin action
 * and the Auth.js endpoint itself (POST /auth/signin/<provider>).
 */
import { env } from '$env/dynamic/private';
import { db } from '$lib/server/db';
import { hitAll, signInLimits, type LimitAnswer } from './rate-limit';

export function normaliseEmail(raw: string): string {
	return raw.trim().toLowerCase();
}

export async function checkSignInLimits(email: string, client: string): Promise<LimitAnswer> {
	const { perAddress, perClient } = signInLimits(env);
	return hitAll(db, [
		[perAddress, normaliseEmail(email)],
		[perClient, client]
	]);
}

/** Parse ADMIN_EMAILS ("a@x.test, b@y.test") into a set of lower-case addresses. */
export function adminEmailsFrom(value: string | undefined): Set<string> {
	return new Set(
		(value ?? '')
			.split(/[,\s]+/)
			.map((s) => s.trim().toLowerCase())
			.filter(Boolean)
	);
}

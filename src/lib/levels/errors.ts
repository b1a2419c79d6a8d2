/**
 * Thrown when level readings or a scope trace cannot be analysed. The message
 * is meant to be shown to the person who supplied the data, so it says what
 * was wrong in plain words (and where, when that is known).
 */
export class LevelInputError extends Error {
	/** Individual problems, when more than one was found. */
	readonly issues: string[];

	constructor(message: string, issues: string[] = []) {
		super(message);
		this.name = 'LevelInputError';
		this.issues = issues.length > 0 ? issues : [message];
	}
}

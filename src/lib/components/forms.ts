/**
 * The superForm setup, written once for every workspace, admin and member form.
 * `workspaceForm` reads the form from page data once (untrack: later data does not reset what
 * someone is typing) and keeps the values after a post unless `resetForm` is asked for.
 * `looseStores` gives the stores keyed by any field name, for shared field components whose
 * forms differ in type (e.g. add and edit); the casts live here and nowhere else.
 */
import { untrack } from 'svelte';
import type { Readable, Writable } from 'svelte/store';
import { superForm, type FormOptions, type SuperForm, type SuperValidated } from 'sveltekit-superforms';

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- superforms' own default for the message type
type AnyMessage = any;

export function workspaceForm<
	T extends Record<string, unknown>,
	M = AnyMessage,
	In extends Record<string, unknown> = T
>(data: () => SuperValidated<T, M, In>, options: FormOptions<T, M, In> = {}): SuperForm<T, M> {
	return superForm(untrack(data), { resetForm: false, ...options });
}

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- values and errors of whichever form a shared component is given
type Loose = Record<string, any>;

/** Pass a getter (`() => sf`): a component's prop is read once, untracked, like the form itself. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- accepts any form's SuperForm
export function looseStores(get: () => SuperForm<any, any>) {
	return untrack(() => {
		const sf = get();
		return {
			form: sf.form as unknown as Writable<Loose>,
			errors: sf.errors as unknown as Readable<Loose>,
			constraints: sf.constraints as unknown as Readable<Loose>
		};
	});
}

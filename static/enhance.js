// Progressive enhancement for pages served without the app's JavaScript (SvelteKit `csr = false`,
// the catalogue): the light/dark switch (as src/lib/theme.svelte.ts does it) and filter forms
// that submit as soon as a field changes. Plain script, a few hundred bytes.
(() => {
	const root = document.documentElement;
	for (const button of document.querySelectorAll('[data-theme-toggle]')) {
		const label = () => {
			const text = `Switch to ${root.classList.contains('dark') ? 'light' : 'dark'} theme`;
			button.setAttribute('aria-label', text);
			button.title = text;
		};
		button.addEventListener('click', () => {
			const dark = !root.classList.contains('dark');
			root.classList.toggle('dark', dark);
			try {
				localStorage.setItem('sg-theme', dark ? 'dark' : 'light');
			} catch {
				/* storage unavailable: the choice lasts for this page */
			}
			label();
		});
		label();
		button.disabled = false;
	}
	for (const form of document.querySelectorAll('form[data-autosubmit]')) {
		form.addEventListener('change', () => form.requestSubmit());
	}
})();

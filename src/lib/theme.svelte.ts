/**
 * Light/dark theme, remembered in localStorage under 'sg-theme'.
 *
 * src/app.html applies the remembered (or system) theme before first paint by
 * toggling the `dark` class on <html>; this class reads that state once in the
 * browser (`theme.init()`, called from the root layout) and keeps it in sync.
 * On the server it always reports 'light' and never touches the DOM.
 */
export type ThemeName = 'light' | 'dark';

export const THEME_STORAGE_KEY = 'sg-theme';

class Theme {
	current = $state<ThemeName>('light');
	/** true once init() has read the real state in the browser */
	ready = $state(false);

	get isDark(): boolean {
		return this.current === 'dark';
	}

	init(): void {
		if (typeof document === 'undefined') return;
		this.current = document.documentElement.classList.contains('dark') ? 'dark' : 'light';
		this.ready = true;
	}

	set(name: ThemeName): void {
		this.current = name;
		if (typeof document === 'undefined') return;
		document.documentElement.classList.toggle('dark', name === 'dark');
		try {
			localStorage.setItem(THEME_STORAGE_KEY, name);
		} catch {
			// storage may be unavailable (private mode, blocked): the class still applies
		}
	}

	toggle(): void {
		this.set(this.current === 'dark' ? 'light' : 'dark');
	}
}

export const theme = new Theme();

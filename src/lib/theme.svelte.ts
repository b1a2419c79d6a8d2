/**
 * Light/dark theme, remembered in localStorage under 'sg-theme'.
 *
 * src/app.html applies the remembered (or system) theme before first paint by
 * toggling the `dark` class on <html>; this class reads that state once in the
 * browser (`theme.init()`, called by ThemeToggle on mount) and keeps it in sync.
 * On the server it always reports 'light' and never touches the DOM.
 */
export type ThemeName = 'light' | 'dark';

export const THEME_STORAGE_KEY = 'sg-theme';

function stored(): ThemeName | null {
	try {
		const value = localStorage.getItem(THEME_STORAGE_KEY);
		return value === 'light' || value === 'dark' ? value : null;
	} catch {
		return null;
	}
}

class Theme {
	current = $state<ThemeName>('light');
	/** true once init() has read the real state in the browser */
	ready = $state(false);

	get isDark(): boolean {
		return this.current === 'dark';
	}

	/** Read the state app.html applied; follow other tabs and, until a choice is stored, the system. */
	init(): void {
		if (typeof document === 'undefined' || this.ready) return;
		this.current = document.documentElement.classList.contains('dark') ? 'dark' : 'light';
		this.ready = true;

		window.addEventListener('storage', (event) => {
			if (event.key === THEME_STORAGE_KEY && (event.newValue === 'light' || event.newValue === 'dark')) {
				this.#apply(event.newValue);
			}
		});
		try {
			const media = matchMedia('(prefers-color-scheme: dark)');
			media.addEventListener('change', (event) => {
				if (!stored()) this.#apply(event.matches ? 'dark' : 'light');
			});
		} catch {
			// matchMedia unavailable: nothing to follow
		}
	}

	#apply(name: ThemeName): void {
		this.current = name;
		document.documentElement.classList.toggle('dark', name === 'dark');
	}

	set(name: ThemeName): void {
		if (typeof document === 'undefined') {
			this.current = name;
			return;
		}
		this.#apply(name);
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

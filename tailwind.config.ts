import type { Config } from 'tailwindcss';

// The "bench instrument" look: neutral surfaces, one warm accent, channel colours for data.
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	darkMode: 'class',
	theme: {
		extend: {
			fontFamily: {
				sans: ['"Inter Variable"', 'system-ui', 'sans-serif']
			},
			colors: {
				surface: {
					DEFAULT: 'rgb(var(--surface) / <alpha-value>)',
					raised: 'rgb(var(--surface-raised) / <alpha-value>)',
					sunken: 'rgb(var(--surface-sunken) / <alpha-value>)'
				},
				ink: {
					DEFAULT: 'rgb(var(--ink) / <alpha-value>)',
					muted: 'rgb(var(--ink-muted) / <alpha-value>)'
				},
				line: 'rgb(var(--line) / <alpha-value>)',
				accent: {
					DEFAULT: 'rgb(var(--accent) / <alpha-value>)',
					ink: 'rgb(var(--accent-ink) / <alpha-value>)'
				},
				channel: {
					r: 'rgb(var(--channel-r) / <alpha-value>)',
					g: 'rgb(var(--channel-g) / <alpha-value>)',
					b: 'rgb(var(--channel-b) / <alpha-value>)'
				}
			}
		}
	}
} satisfies Config;

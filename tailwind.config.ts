import type { Config } from 'tailwindcss';

/**
 * Candlebook's design tokens. Colours resolve to CSS custom properties (set in src/app.css with both
 * theme values), so one class works in both themes; opacity modifiers mix with transparent.
 */
const token = (name: string) => `var(--cb-${name})`;

export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	darkMode: ['selector', '[data-theme="dark"]'],
	theme: {
		extend: {
			colors: {
				paper: token('paper'),
				vellum: token('vellum'),
				ink: token('ink'),
				'ink-soft': token('ink-soft'),
				rule: token('rule'),
				ember: token('ember'),
				'ember-deep': token('ember-deep'),
				tide: token('tide'),
				moss: token('moss'),
				rust: token('rust')
			},
			fontFamily: {
				sans: ['"Noto Sans"', 'system-ui', 'sans-serif']
			},
			fontSize: {
				caption: ['0.8125rem', { lineHeight: '1.25rem' }],
				body: ['0.9375rem', { lineHeight: '1.5rem' }],
				lead: ['1.125rem', { lineHeight: '1.75rem' }],
				title: ['1.75rem', { lineHeight: '2.25rem', letterSpacing: '-0.01em' }],
				display: ['2.5rem', { lineHeight: '3rem', letterSpacing: '-0.02em' }]
			},
			borderRadius: {
				card: '0.625rem'
			},
			maxWidth: {
				page: '72rem'
			}
		}
	}
} satisfies Config;

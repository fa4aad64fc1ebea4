/** The reader's theme choice: pinned light or dark, or following the system. Kept in a cookie. */
export const THEMES = ['light', 'dark', 'system'] as const;
export type Theme = (typeof THEMES)[number];
export const THEME_COOKIE = 'candlebook_theme';
/** A year: the choice is a preference, not a secret. */
export const THEME_COOKIE_MAX_AGE = 365 * 24 * 3600;

export function parseTheme(value: string | null | undefined): Theme {
	return (THEMES as readonly string[]).includes(value ?? '') ? (value as Theme) : 'system';
}

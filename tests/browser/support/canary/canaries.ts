/**
 * Canaries: unique strings and numbers planted in data a caller may not see, and the search for them
 * in what the server answers. A text canary is matched case-insensitively (pages may restyle words);
 * a number is matched at every rounding the product shows (3 and 4 decimals and full precision),
 * after an ASCII hyphen or a Unicode minus (U+2212), with or without a space between (`a − 2.163`).
 * A shorter rounding is also a prefix of every longer one that does not carry, so other precisions
 * are caught too.
 */
export type CallerName =
	| 'anonymous'
	| 'reader outside the group'
	| 'curator outside the group'
	| 'token without scopes'
	| 'token [read:private] of another group'
	| 'group member'
	| 'admin';

export interface Canary {
	/** What was planted, e.g. `embargoed v2 zero point`. */
	label: string;
	/** Who may see it. */
	visibleTo: ReadonlySet<CallerName>;
	/** The strings searched for (shown in reports). */
	needles: readonly string[];
	/** Finds the canary in a text already in lower case; returns the needle that matched, or null. */
	find(lowerCaseText: string): string | null;
}

const escapeRegExp = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

export function textCanary(label: string, text: string, visibleTo: ReadonlySet<CallerName>): Canary {
	const lower = text.toLowerCase();
	return {
		label,
		visibleTo,
		needles: [text],
		find: (haystack) => (haystack.includes(lower) ? text : null)
	};
}

/** The roundings of a negative number as the product may print it, without the sign. */
export function numberRoundings(value: number): string[] {
	if (!(value < 0) || !Number.isFinite(value)) throw new Error(`numeric canaries are negative numbers, not ${value}`);
	const magnitude = -value;
	return [...new Set([magnitude.toFixed(3), magnitude.toFixed(4), String(magnitude)])];
}

export function numberCanary(label: string, value: number, visibleTo: ReadonlySet<CallerName>): Canary {
	const roundings = numberRoundings(value);
	const patterns = roundings.map((rounding) => ({
		rounding,
		// A sign, an optional space, the digits; not preceded by a digit (so −114.830 is not −14.830).
		regex: new RegExp(`(?<![0-9.])[-\\u2212]\\s?${escapeRegExp(rounding)}`)
	}));
	return {
		label,
		visibleTo,
		needles: roundings.flatMap((r) => [`-${r}`, `\u2212${r}`]),
		find: (haystack) => {
			for (const { rounding, regex } of patterns) {
				const match = regex.exec(haystack);
				if (match) return match[0].includes('\u2212') ? `\u2212${rounding}` : `-${rounding}`;
			}
			return null;
		}
	};
}

/**
 * Numbers are only useful canaries when no two of them share a rounding: returns the pairs that do
 * (which would make a report name the wrong canary).
 */
export function sharedRoundings(values: readonly { label: string; value: number }[]): string[] {
	const seen = new Map<string, string>();
	const clashes: string[] = [];
	for (const { label, value } of values) {
		for (const rounding of numberRoundings(value).slice(0, 2)) {
			const other = seen.get(rounding);
			if (other && other !== label) clashes.push(`${label} and ${other} both round to −${rounding}`);
			seen.set(rounding, label);
		}
	}
	return clashes;
}

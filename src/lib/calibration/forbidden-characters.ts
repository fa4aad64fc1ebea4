/**
 * Characters that text in Candlebook never holds: those XML 1.0 §2.2 excludes from `Char` (C0 controls
 * other than tab, line feed and carriage return; unpaired UTF-16 surrogates; U+FFFE and U+FFFF).
 * PostgreSQL's text and jsonb cannot store U+0000 or an unpaired surrogate either, so uploads refuse
 * them by cell or JSON path, and the XML writers drop any that reach them.
 */
const FORBIDDEN =
	// The pattern is about control characters, so the control-character rule does not apply to it.
	// eslint-disable-next-line no-control-regex
	/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;
const FORBIDDEN_ALL = new RegExp(FORBIDDEN.source, 'g');

export interface ForbiddenCharacter {
	/** UTF-16 index of the character in the text. */
	index: number;
	/** The code unit found (a surrogate for an unpaired surrogate). */
	codeUnit: number;
}

export function findForbiddenCharacter(text: string): ForbiddenCharacter | null {
	const match = FORBIDDEN.exec(text);
	return match ? { index: match.index, codeUnit: match[0].charCodeAt(0) } : null;
}

export function stripForbiddenCharacters(text: string): string {
	return text.replace(FORBIDDEN_ALL, '');
}

const hex = (codeUnit: number) => `U+${codeUnit.toString(16).toUpperCase().padStart(4, '0')}`;

/** Why the character is refused, in words a person with a text editor can act on. */
export function forbiddenCharacterReason({ codeUnit }: ForbiddenCharacter): string {
	const what =
		codeUnit === 0
			? `${hex(codeUnit)} (a NUL byte)`
			: codeUnit >= 0xd800 && codeUnit <= 0xdfff
				? `${hex(codeUnit)} (half of a surrogate pair, without its other half)`
				: codeUnit >= 0xfffe
					? `${hex(codeUnit)} (a Unicode noncharacter)`
					: `${hex(codeUnit)} (a control character)`;
	return `contains ${what}, which Candlebook does not store; remove it and send the text again`;
}

/** The text with each forbidden character shown as ⟨U+XXXX⟩, safe to echo in an error. */
export function showForbiddenCharacters(text: string): string {
	return text.replace(FORBIDDEN_ALL, (char) => `⟨${hex(char.charCodeAt(0))}⟩`);
}

export interface ForbiddenInJson {
	/** Where it is, as the API's field errors name it: `stars/3/id`; `(body)` for the root. */
	path: string;
	reason: string;
}

/** The first string (member name or value) of a parsed JSON value holding a forbidden character. */
export function findForbiddenInJson(value: unknown, path = ''): ForbiddenInJson | null {
	const here = path || '(body)';
	if (typeof value === 'string') {
		const found = findForbiddenCharacter(value);
		return found ? { path: here, reason: forbiddenCharacterReason(found) } : null;
	}
	if (Array.isArray(value)) {
		for (let i = 0; i < value.length; i++) {
			const inner = findForbiddenInJson(value[i], path ? `${path}/${i}` : String(i));
			if (inner) return inner;
		}
		return null;
	}
	if (value !== null && typeof value === 'object') {
		for (const [key, member] of Object.entries(value)) {
			const found = findForbiddenCharacter(key);
			const memberPath = path ? `${path}/${showForbiddenCharacters(key)}` : showForbiddenCharacters(key);
			if (found) return { path: memberPath, reason: `the member name ${forbiddenCharacterReason(found)}` };
			const inner = findForbiddenInJson(member, memberPath);
			if (inner) return inner;
		}
	}
	return null;
}

/** Every cell of a parsed table holding a forbidden character, with its 1-based line and column. */
export function findForbiddenCells(
	rows: readonly (readonly string[])[],
	lineOf: (rowIndex: number) => number
): { line: number; columnIndex: number; cell: string; reason: string }[] {
	const found: { line: number; columnIndex: number; cell: string; reason: string }[] = [];
	rows.forEach((cells, rowIndex) =>
		cells.forEach((cell, columnIndex) => {
			const character = findForbiddenCharacter(cell);
			if (character)
				found.push({ line: lineOf(rowIndex), columnIndex, cell, reason: forbiddenCharacterReason(character) });
		})
	);
	return found;
}

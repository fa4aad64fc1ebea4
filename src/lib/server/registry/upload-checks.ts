import { looksLikeFormula, type CanonicalRow, type MappedColumn, type TableIssue } from '../../calibration/index';
import { findForbiddenCharacter, forbiddenCharacterReason } from '../../calibration/forbidden-characters';
import { RegistryError } from './errors';

/**
 * Checks an upload must pass before the table parser sees it, and one it must pass after: the bytes
 * are UTF-8 text, and no text cell would run as a spreadsheet formula when the file is opened again.
 */

export type DecodedUpload = { ok: true; text: string } | { ok: false; issue: TableIssue };

/** Query parameters an upload stores as text (file name, note, star…): 422 naming each that holds a forbidden character. */
export function refuseForbiddenParameters(query: URLSearchParams, names: readonly string[]): void {
	const errors = names.flatMap((name) => {
		const found = findForbiddenCharacter(query.get(name) ?? '');
		return found ? [{ path: name, message: forbiddenCharacterReason(found) }] : [];
	});
	if (errors.length > 0)
		throw new RegistryError(
			422,
			'validation-failed',
			'A query parameter has a character Candlebook does not store.',
			errors
		);
}

/** Decodes strict UTF-8, naming the line of the first byte sequence that is not UTF-8. */
export function decodeUtf8(bytes: Uint8Array): DecodedUpload {
	try {
		return { ok: true, text: new TextDecoder('utf-8', { fatal: true }).decode(bytes) };
	} catch {
		const at = firstInvalidUtf8(bytes);
		let line = 1;
		for (let i = 0; i < at; i++) if (bytes[i] === 0x0a) line++;
		return {
			ok: false,
			issue: {
				line,
				column: null,
				value: `byte 0x${bytes[at].toString(16).padStart(2, '0')} at offset ${at}`,
				reason: 'the file is not UTF-8 text; save it as UTF-8 (spreadsheets call it "CSV UTF-8") and upload it again'
			}
		};
	}
}

/** Offset of the first byte that does not start or continue a valid UTF-8 sequence (RFC 3629 §4). */
function firstInvalidUtf8(bytes: Uint8Array): number {
	let i = 0;
	while (i < bytes.length) {
		const b = bytes[i];
		const length =
			b < 0x80 ? 1 : b >= 0xc2 && b <= 0xdf ? 2 : b >= 0xe0 && b <= 0xef ? 3 : b >= 0xf0 && b <= 0xf4 ? 4 : 0;
		if (length === 0 || i + length > bytes.length) return i;
		for (let k = 1; k < length; k++) if ((bytes[i + k] & 0xc0) !== 0x80) return i;
		const cp =
			length === 1
				? b
				: length === 2
					? ((b & 0x1f) << 6) | (bytes[i + 1] & 0x3f)
					: length === 3
						? ((b & 0x0f) << 12) | ((bytes[i + 1] & 0x3f) << 6) | (bytes[i + 2] & 0x3f)
						: ((b & 0x07) << 18) | ((bytes[i + 1] & 0x3f) << 12) | ((bytes[i + 2] & 0x3f) << 6) | (bytes[i + 3] & 0x3f);
		const overlong = (length === 3 && cp < 0x800) || (length === 4 && cp < 0x10000);
		if (overlong || (cp >= 0xd800 && cp <= 0xdfff) || cp > 0x10ffff) return i;
		i += length;
	}
	return bytes.length;
}

/**
 * Text cells that look like spreadsheet formulas, refused at upload (export neutralises them too).
 * Lines count the header as line 1 and one line per record, as the table parser reports them.
 */
export function formulaCellIssues(columns: readonly MappedColumn[], rows: readonly CanonicalRow[]): TableIssue[] {
	const issues: TableIssue[] = [];
	rows.forEach((row, index) => {
		for (const column of columns) {
			const value = row.values[column.field];
			if (typeof value !== 'string' || !looksLikeFormula(value)) continue;
			issues.push({
				line: index + 2,
				column: column.source_column,
				value: value.length > 40 ? `${value.slice(0, 40)}…` : value,
				reason: 'starts like a spreadsheet formula (=, +, -, @); Candlebook does not store formulas'
			});
		}
	});
	return issues;
}

/** TableIssue → the API's field errors: `line/<n>/<column>` paths, with the value in the message. */
export function issuesToFieldErrors(issues: readonly TableIssue[]): { path: string; message: string }[] {
	return issues.map((issue) => ({
		path: issue.line === null ? 'file' : `line/${issue.line}${issue.column === null ? '' : `/${issue.column}`}`,
		message: issue.value === null ? issue.reason : `${JSON.stringify(issue.value)}: ${issue.reason}`
	}));
}

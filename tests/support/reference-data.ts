import { existsSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';

/**
 * Reference data for checks is read in place, never copied into the project: its licences do not
 * allow redistribution. `CANDLEBOOK_REFERENCE_DATA` points at it; the default is `../shared/data`
 * relative to the project root.
 */
export const REFERENCE_DATA_DIR = resolve(
	process.env.CANDLEBOOK_REFERENCE_DATA ?? join(import.meta.dirname, '..', '..', '..', 'shared', 'data')
);

/** True when the given sub-folder of the reference data exists. */
export function hasReferenceData(folder: string): boolean {
	return existsSync(join(REFERENCE_DATA_DIR, folder));
}

/** One-line reason shown when a reference test is skipped. */
export function missingReason(folder: string): string {
	return `reference data ${join(REFERENCE_DATA_DIR, folder)} not found (set CANDLEBOOK_REFERENCE_DATA)`;
}

export function readReferenceFile(...parts: string[]): string {
	return readFileSync(join(REFERENCE_DATA_DIR, ...parts), 'utf8');
}

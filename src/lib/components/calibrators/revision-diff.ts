/** Two calibrator revisions compared, as the API's revision diff sends it (`revisionDiffToWire`). */
export interface RevisionDiffWire {
	added: string[];
	removed: string[];
	changed: {
		star: string;
		previous_name: string | null;
		matched_by: string;
		changes: { field: string; from: unknown; to: unknown }[];
	}[];
	unchanged_count: number;
	fields_added: string[];
	fields_removed: string[];
}

/** A compared cell as text: missing values as a dash. */
export const diffCell = (value: unknown) => (value === null || value === undefined ? '—' : String(value));

import type { CanonicalRow, CellValue } from './parse';

/**
 * Row-by-row, field-by-field comparison of two calibrator revisions. Rows are matched by `cross_id`
 * when both have one (so a renamed star is a rename, not a removal plus an addition), else by name.
 */
export interface FieldChange {
	field: string;
	from: CellValue;
	to: CellValue;
}

export interface RowChange {
	star: string;
	/** The star's name in the older revision when it was renamed. */
	previousName: string | null;
	matchedBy: 'cross_id' | 'star';
	changes: FieldChange[];
}

export interface RevisionDiff {
	added: CanonicalRow[];
	removed: CanonicalRow[];
	changed: RowChange[];
	unchangedCount: number;
	fieldsAdded: string[];
	fieldsRemoved: string[];
}

const crossId = (row: CanonicalRow): string | null =>
	typeof row.values.cross_id === 'string' ? row.values.cross_id : null;

export function diffCalibratorRevisions(before: readonly CanonicalRow[], after: readonly CanonicalRow[]): RevisionDiff {
	const beforeFields = new Set(before.flatMap((row) => Object.keys(row.values)));
	const afterFields = new Set(after.flatMap((row) => Object.keys(row.values)));
	const byCrossId = new Map<string, CanonicalRow>();
	const byName = new Map<string, CanonicalRow>();
	for (const row of before) {
		const id = crossId(row);
		if (id) byCrossId.set(id, row);
		byName.set(row.star, row);
	}
	const matched = new Set<CanonicalRow>();
	const result: RevisionDiff = {
		added: [],
		removed: [],
		changed: [],
		unchangedCount: 0,
		fieldsAdded: [...afterFields].filter((field) => !beforeFields.has(field)).sort(),
		fieldsRemoved: [...beforeFields].filter((field) => !afterFields.has(field)).sort()
	};
	for (const row of after) {
		const id = crossId(row);
		const byId = id ? byCrossId.get(id) : undefined;
		const previous = byId ?? byName.get(row.star);
		if (!previous || matched.has(previous)) {
			result.added.push(row);
			continue;
		}
		matched.add(previous);
		const changes = compareValues(previous, row);
		const renamed = previous.star !== row.star;
		if (changes.length === 0 && !renamed) {
			result.unchangedCount += 1;
			continue;
		}
		result.changed.push({
			star: row.star,
			previousName: renamed ? previous.star : null,
			matchedBy: byId ? 'cross_id' : 'star',
			changes
		});
	}
	result.removed = before.filter((row) => !matched.has(row));
	return result;
}

function compareValues(before: CanonicalRow, after: CanonicalRow): FieldChange[] {
	const fields = new Set([...Object.keys(before.values), ...Object.keys(after.values)]);
	fields.delete('star');
	const changes: FieldChange[] = [];
	for (const field of [...fields].sort()) {
		const from = before.values[field] ?? null;
		const to = after.values[field] ?? null;
		if (!Object.is(from, to)) changes.push({ field, from, to });
	}
	return changes;
}

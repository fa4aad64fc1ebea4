/**
 * The three published forms of one calibrator revision, as text that never changes for a stored
 * revision: JSON (RFC 8785 canonical, the sealed content inside), CSV (RFC 4180 with a header line,
 * formula-like text neutralised) and IVOA VOTable 1.4.
 */
import { canonicalJson } from '../calibration/digest';
import { calibratorRowsToCsv } from '../calibration/calibrator-table/export';
import type { CanonicalRow } from '../calibration/calibrator-table/parse';
import type { CalibratorRevisionContent } from '../calibration/frozen-content';
import { calibratorRevisionToVoTable } from './votable';

export const REVISION_FORMATS = ['json', 'csv', 'votable'] as const;
export type RevisionFormat = (typeof REVISION_FORMATS)[number];

export const REVISION_MEDIA_TYPES: Record<RevisionFormat, string> = {
	json: 'application/json',
	csv: 'text/csv',
	votable: 'application/x-votable+xml'
};

export const REVISION_FILE_EXTENSIONS: Record<RevisionFormat, string> = { json: 'json', csv: 'csv', votable: 'vot' };

export interface RevisionPublication {
	content: CalibratorRevisionContent & { digest: string };
	title: string;
	licence: string;
	citations: readonly string[];
}

/**
 * JSON: `content` is the sealed revision exactly as digested (remove its `digest`, take the RFC 8785
 * canonical JSON, SHA-256); the set's title, licence and citations sit beside it.
 */
export function revisionToJson({ content, title, licence, citations }: RevisionPublication): string {
	return canonicalJson({
		calibrator_set: content.calibrator_set,
		revision: content.revision,
		digest: content.digest,
		title,
		licence,
		citations: [...citations],
		content
	});
}

export function renderRevision(format: RevisionFormat, publication: RevisionPublication): string {
	switch (format) {
		case 'json':
			return revisionToJson(publication);
		case 'csv':
			// Stored revisions only ever hold numbers, text and nulls (the upload parser makes nothing else).
			return calibratorRowsToCsv(publication.content.columns, publication.content.rows as CanonicalRow[]);
		case 'votable':
			return calibratorRevisionToVoTable(publication.content, {
				digest: publication.content.digest,
				licence: publication.licence,
				requiredCitations: publication.citations,
				title: publication.title
			});
	}
}

interface AcceptEntry {
	type: string;
	subtype: string;
	q: number;
	order: number;
}

function parseAccept(header: string): AcceptEntry[] {
	return header
		.split(',')
		.map((part, order) => {
			const [range, ...params] = part.trim().toLowerCase().split(';');
			const [type, subtype] = range.trim().split('/');
			const qParam = params.map((param) => param.trim()).find((param) => param.startsWith('q='));
			const q = qParam ? Number(qParam.slice(2)) : 1;
			return { type, subtype, q: Number.isFinite(q) ? q : 0, order };
		})
		.filter((entry) => entry.type && entry.subtype);
}

function specificity(entry: AcceptEntry, mediaType: string): number {
	const [type, subtype] = mediaType.split('/');
	if (entry.type === type && entry.subtype === subtype) return 2;
	if (entry.type === type && entry.subtype === '*') return 1;
	if (entry.type === '*' && entry.subtype === '*') return 0;
	return -1;
}

/**
 * The format an `Accept` header prefers (RFC 9110 §12.5.1): each media type takes the q of the most
 * specific range that matches it; the highest q wins, then the order written. JSON when nothing is
 * acceptable, as a server may disregard the header rather than answer 406.
 */
export function formatFromAccept(header: string | null): RevisionFormat {
	if (!header) return 'json';
	const entries = parseAccept(header);
	let best: { format: RevisionFormat; q: number; order: number } | null = null;
	for (const format of REVISION_FORMATS) {
		let match: { entry: AcceptEntry; specificity: number } | null = null;
		for (const entry of entries) {
			const level = specificity(entry, REVISION_MEDIA_TYPES[format]);
			if (level > (match?.specificity ?? -1)) match = { entry, specificity: level };
		}
		if (!match || match.entry.q <= 0) continue;
		const { q, order } = match.entry;
		if (!best || q > best.q || (q === best.q && order < best.order)) best = { format, q, order };
	}
	return best?.format ?? 'json';
}

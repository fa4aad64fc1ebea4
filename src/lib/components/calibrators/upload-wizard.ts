import type { CanonicalRow, MappedColumn, TableIssue } from '$lib/calibration/index';
import type { MappingRow } from './column-mapping';

/** What each step of the upload wizard hands to the page (the action's return value). */
export interface StagedFile {
	sha256: string;
	name: string;
	mediaType: string;
	bytes: number;
}

export interface UploadSummary {
	populations: Record<string, number>;
	periodDays: { min: number; max: number } | null;
}

export interface UploadChanges {
	added: string[];
	removed: string[];
	changed: { star: string; fields: string[] }[];
	unchanged: number;
}

export type WizardState =
	| { step: 'file'; message: string; issues?: TableIssue[] }
	| { step: 'mapping'; staged: StagedFile; columns: MappingRow[]; sample: string[][] }
	| {
			step: 'report';
			staged: StagedFile;
			columns: MappingRow[];
			sample: string[][];
			keep: boolean;
			message: string;
			issues: TableIssue[];
	  }
	| {
			step: 'preview';
			staged: StagedFile;
			columns: MappingRow[];
			keep: boolean;
			mapping: string;
			fields: MappedColumn[];
			rowCount: number;
			rows: CanonicalRow[];
			summary: UploadSummary;
			previous: number | null;
			changes: UploadChanges;
	  };

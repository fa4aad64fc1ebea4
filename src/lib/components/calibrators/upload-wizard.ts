import type { CanonicalRow, LightCurveFill, LightCurveNotice, MappedColumn, TableIssue } from '$lib/calibration/index';
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

/** The light-curve upload chosen to fill periods and mean magnitudes, carried from step to step. */
export interface LightCurveChoice {
	upload: string;
	fill: LightCurveFill;
}

/** What the preview says about values taken from light curves. */
export interface LightCurvePreview {
	choice: LightCurveChoice;
	/** `star\u0000field` of every cell an analysis filled (to mark them in the rows shown). */
	cells: string[];
	valueCount: number;
	notices: LightCurveNotice[];
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
			lightCurves: LightCurveChoice | null;
			message: string;
			issues: TableIssue[];
	  }
	| {
			step: 'preview';
			staged: StagedFile;
			columns: MappingRow[];
			keep: boolean;
			lightCurves: LightCurvePreview | null;
			mapping: string;
			fields: MappedColumn[];
			rowCount: number;
			rows: CanonicalRow[];
			summary: UploadSummary;
			previous: number | null;
			changes: UploadChanges;
	  };

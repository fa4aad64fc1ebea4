/** Words the screens use for the registry's ids (bands keep their trade names). */
import { POPULATIONS } from '../calibration/populations';
import type { PopulationId } from '../calibration/types';
import type { AnchorTypeId, RelationState } from './filters';

export const populationLabel = (id: PopulationId | string): string =>
	(POPULATIONS as Record<string, { label: string }>)[id]?.label ?? id;

export const ANCHOR_LABELS: Record<AnchorTypeId, string> = {
	parallax: 'Parallaxes',
	geometric_host: 'Geometric host distance',
	cluster: 'Cluster distance'
};

export const STATE_LABELS: Record<RelationState, string> = {
	active: 'Active',
	proposed: 'Awaiting a first version',
	retired: 'Retired'
};

export const STATE_TONES: Record<RelationState, 'moss' | 'tide' | 'rust'> = {
	active: 'moss',
	proposed: 'tide',
	retired: 'rust'
};

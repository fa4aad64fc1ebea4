/**
 * Time stamps of a light curve. Every series states its `time_reference` and `time_offset_days`
 * (e.g. 2450000 for "HJD − 2450000"); times are brought to full days on the series' own frame.
 *
 * JD and MJD are the same (geocentric) frame, MJD = JD − 2400000.5 (IAU 1997 resolution B1), so MJD
 * becomes JD. HJD (heliocentric) and BJD_TDB (barycentric, TDB) are other frames: converting needs the
 * star's coordinates and the observatory, so they are never converted and never mixed.
 */
import { CalibrationInputError } from '../types';

export const TIME_REFERENCES = ['HJD', 'BJD_TDB', 'JD', 'MJD'] as const;
export type TimeReference = (typeof TIME_REFERENCES)[number];

/** Frame a series is expressed in after MJD has become JD. */
export type TimeFrame = 'HJD' | 'BJD_TDB' | 'JD';

export const MJD_ZERO_POINT_JD = 2400000.5;

export function isTimeReference(value: unknown): value is TimeReference {
	return typeof value === 'string' && (TIME_REFERENCES as readonly string[]).includes(value);
}

export function timeFrameOf(reference: TimeReference): TimeFrame {
	return reference === 'MJD' ? 'JD' : reference;
}

/** Offset (days) that turns a stated time into full days on its frame: MJD adds 2400000.5. */
export function fullDayOffset(reference: TimeReference, timeOffsetDays: number): number {
	return timeOffsetDays + (reference === 'MJD' ? MJD_ZERO_POINT_JD : 0);
}

/** Full days on the series' frame: t + time_offset_days (+ 2400000.5 for MJD). */
export function toFullDays(time: number, reference: TimeReference, timeOffsetDays: number): number {
	return time + fullDayOffset(reference, timeOffsetDays);
}

export interface TimeStamping {
	timeReference: TimeReference;
	timeOffsetDays: number;
}

/**
 * The frame shared by several series (e.g. the bands of one star). Throws when HJD, BJD_TDB and
 * JD/MJD would be mixed, naming the first series that differs.
 */
export function commonTimeFrame(series: readonly (TimeStamping & { id: string })[]): TimeFrame {
	if (series.length === 0) {
		throw new CalibrationInputError([{ star: null, field: 'series', message: 'needs at least one series' }]);
	}
	const frame = timeFrameOf(series[0].timeReference);
	const issues = series
		.filter((entry) => timeFrameOf(entry.timeReference) !== frame)
		.map((entry) => ({
			star: entry.id,
			field: 'time_reference',
			message: `${entry.timeReference} cannot be combined with ${series[0].timeReference} (${series[0].id}) without coordinates; convert before upload`
		}));
	if (issues.length > 0) throw new CalibrationInputError(issues);
	return frame;
}

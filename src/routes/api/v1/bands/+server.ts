import { json } from '@sveltejs/kit';
import { BANDS } from '$lib/calibration';
import type { RequestHandler } from './$types';

/** The band catalogue, single bands and Wesenheit combinations, with their stable ids. */
export const GET: RequestHandler = () =>
	json(
		{
			items: Object.values(BANDS).map((band) =>
				band.kind === 'single'
					? {
							id: band.id,
							kind: 'single',
							label: band.label,
							photometric_system: band.photometricSystem,
							effective_wavelength_micron: band.effectiveWavelengthMicron,
							magnitude_system: band.magnitudeSystem,
							broad: band.broad ?? false
						}
					: {
							id: band.id,
							kind: 'wesenheit',
							label: band.label,
							wesenheit: {
								magnitude_band: band.magnitudeBand,
								colour_bands: band.colourBands,
								ratio: band.ratio,
								ratio_source: band.ratioSource
							}
						}
			),
			next_cursor: null
		},
		{ headers: { 'cache-control': 'public, max-age=3600', 'access-control-allow-origin': '*' } }
	);

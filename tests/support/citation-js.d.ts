/** The part of citation-js (which ships no types) that the citation checks use. */
declare module '@citation-js/core' {
	export class Cite {
		constructor(data: unknown);
		data: unknown[];
	}
}

declare module '@citation-js/plugin-bibtex';

import { afterAll, describe, expect, test } from 'vitest';
import { crossSiteRefusal, type WriteRequest } from './cross-site-writes';

const started = performance.now();
afterAll(() => console.log(`cross-site-writes unit tests: ${Math.round(performance.now() - started)} ms`));

const SITE = 'https://candlebook.example.org';
const write = (overrides: Partial<WriteRequest>): WriteRequest => ({
	method: 'POST',
	pathname: '/api/v1/proposals/p1/submit',
	origin: null,
	fetchSite: null,
	siteOrigin: SITE,
	cookieAuthenticated: true,
	...overrides
});

/** Sec-Fetch-Site values from the Fetch Metadata Request Headers specification (W3C). */
describe('cookie-signed API writes from another origin are refused', () => {
	test.each([
		['Sec-Fetch-Site: cross-site', { fetchSite: 'cross-site' }],
		['Sec-Fetch-Site: same-site (a sibling host)', { fetchSite: 'same-site' }],
		['an Origin of another site', { origin: 'https://evil.example' }],
		['an Origin of another port', { origin: 'https://candlebook.example.org:8443' }],
		['an Origin of another scheme', { origin: 'http://candlebook.example.org' }],
		['the opaque Origin null', { origin: 'null' }],
		['a same-origin claim with a foreign Origin', { fetchSite: 'same-origin', origin: 'https://evil.example' }],
		['DELETE', { method: 'DELETE', fetchSite: 'cross-site' }],
		['PUT', { method: 'PUT', origin: 'https://evil.example' }],
		['PATCH', { method: 'PATCH', origin: 'https://evil.example' }]
	])('%s', (_label, overrides) => {
		expect(crossSiteRefusal(write(overrides))).toMatch(/another site|came from .* not https:\/\/candlebook/);
	});
});

describe('everything else passes', () => {
	test.each([
		['this site’s own page', { fetchSite: 'same-origin', origin: SITE }],
		['a typed or bookmarked request', { fetchSite: 'none' }],
		['the Origin of this site without fetch metadata', { origin: SITE }],
		['a program holding the cookie itself (neither header)', {}],
		[
			'an API token from anywhere',
			{ cookieAuthenticated: false, fetchSite: 'cross-site', origin: 'https://pipeline.example' }
		],
		['a read from another site', { method: 'GET', fetchSite: 'cross-site', origin: 'https://evil.example' }],
		['a CORS preflight', { method: 'OPTIONS', fetchSite: 'cross-site', origin: 'https://evil.example' }],
		['a page form post (SvelteKit checks those)', { pathname: '/relations/x', origin: 'https://evil.example' }]
	])('%s', (_label, overrides) => {
		expect(crossSiteRefusal(write(overrides))).toBeNull();
	});
});

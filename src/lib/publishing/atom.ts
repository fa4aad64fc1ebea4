/**
 * An Atom feed (RFC 4287) of a relation's events — new versions and deprecations — so people and
 * pipelines can follow a calibration without polling the API.
 */
import { escapeXml } from './votable';

export interface FeedEntry {
	/** A stable, unique IRI for the event (RFC 4287 §4.2.6), e.g. the version's URL plus a fragment. */
	id: string;
	title: string;
	/** ISO 8601 with time zone. */
	updated: string;
	link: string;
	summary: string;
}

export interface Feed {
	id: string;
	title: string;
	/** The feed's own URL (rel="self"). */
	selfLink: string;
	/** The page the feed is about (rel="alternate"). */
	alternateLink: string;
	entries: FeedEntry[];
	/** Used when there are no entries: the feed's `updated` must still be present. */
	fallbackUpdated: string;
}

/** Newest entry first; the feed's `updated` is the newest entry's. */
export function atomFeed(feed: Feed): string {
	const entries = [...feed.entries].sort((a, b) => b.updated.localeCompare(a.updated));
	const updated = entries[0]?.updated ?? feed.fallbackUpdated;
	return [
		'<?xml version="1.0" encoding="utf-8"?>',
		'<feed xmlns="http://www.w3.org/2005/Atom">',
		`  <id>${escapeXml(feed.id)}</id>`,
		`  <title>${escapeXml(feed.title)}</title>`,
		`  <updated>${escapeXml(updated)}</updated>`,
		`  <link rel="self" type="application/atom+xml" href="${escapeXml(feed.selfLink)}"/>`,
		`  <link rel="alternate" type="text/html" href="${escapeXml(feed.alternateLink)}"/>`,
		'  <author><name>Candlebook</name></author>',
		'  <generator>Candlebook</generator>',
		...entries.flatMap((entry) => [
			'  <entry>',
			`    <id>${escapeXml(entry.id)}</id>`,
			`    <title>${escapeXml(entry.title)}</title>`,
			`    <updated>${escapeXml(entry.updated)}</updated>`,
			`    <link rel="alternate" type="text/html" href="${escapeXml(entry.link)}"/>`,
			`    <summary type="text">${escapeXml(entry.summary)}</summary>`,
			'  </entry>'
		]),
		'</feed>',
		''
	].join('\n');
}

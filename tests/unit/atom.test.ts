import { describe, expect, test } from 'vitest';
import { atomFeed } from '../../src/lib/publishing/atom';
import { runPython } from '../support/astropy';

const feed = atomFeed({
	id: 'http://127.0.0.1:3000/relations/invented-w-vi',
	title: 'Candlebook: invented W_VI relation <demo>',
	selfLink: 'http://127.0.0.1:3000/relations/invented-w-vi/feed.atom',
	alternateLink: 'http://127.0.0.1:3000/relations/invented-w-vi',
	fallbackUpdated: '2026-01-01T00:00:00Z',
	entries: [
		{
			id: 'http://127.0.0.1:3000/relations/invented-w-vi/versions/1#approved',
			title: 'Version 1 approved',
			updated: '2026-03-01T10:00:00Z',
			link: 'http://127.0.0.1:3000/relations/invented-w-vi/versions/1',
			summary: 'First calibration & more'
		},
		{
			id: 'http://127.0.0.1:3000/relations/invented-w-vi/versions/1#deprecated',
			title: 'Version 1 deprecated',
			updated: '2026-06-01T10:00:00Z',
			link: 'http://127.0.0.1:3000/relations/invented-w-vi/versions/1',
			summary: 'Superseded by invented-w-vi@2'
		}
	]
});

describe('Atom feed (RFC 4287)', () => {
	test('Python’s standard XML parser reads the required elements: feed id, title, updated, and per entry the same', () => {
		// xml.etree.ElementTree from the Python standard library, reading the Atom namespace of RFC 4287 §2.
		const read = runPython<{ feed: Record<string, string>; entries: Record<string, string>[] }>(
			[
				'import xml.etree.ElementTree as ET',
				'ns = {"a": "http://www.w3.org/2005/Atom"}',
				'root = ET.fromstring(data["xml"])',
				'pick = lambda el: {k: el.find("a:" + k, ns).text for k in ("id", "title", "updated")}',
				'print(json.dumps({"feed": pick(root), "entries": [pick(e) | {"link": e.find("a:link", ns).get("href")} for e in root.findall("a:entry", ns)]}))'
			].join('\n'),
			{ xml: feed }
		);
		expect(read.feed).toEqual({
			id: 'http://127.0.0.1:3000/relations/invented-w-vi',
			title: 'Candlebook: invented W_VI relation <demo>',
			updated: '2026-06-01T10:00:00Z'
		});
		expect(read.entries.map((entry) => entry.title)).toEqual(['Version 1 deprecated', 'Version 1 approved']);
		expect(new Set(read.entries.map((entry) => entry.id)).size).toBe(2);
	});

	test('an empty feed still has its updated element', () => {
		const empty = atomFeed({
			id: 'x:y',
			title: 't',
			selfLink: 's',
			alternateLink: 'a',
			fallbackUpdated: '2026-01-01T00:00:00Z',
			entries: []
		});
		expect(empty).toContain('<updated>2026-01-01T00:00:00Z</updated>');
		expect(empty).not.toContain('<entry>');
	});
});

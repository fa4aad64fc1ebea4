/**
 * Copyable client code for the read API. Every pin snippet fetches `slug@n` and refuses to go on
 * unless the digest is the one the reader pinned: the `digest` field must equal it, and the sha256 of
 * the RFC 8785 canonical JSON of the rest of the body must equal it too.
 */
export interface PinTarget {
	/** The site's origin, e.g. https://candlebook.example.org */
	origin: string;
	ref: string;
	digest: string;
}

export type SnippetLanguage = 'curl' | 'python' | 'typescript';
export const SNIPPET_LANGUAGES: { id: SnippetLanguage; label: string }[] = [
	{ id: 'curl', label: 'curl' },
	{ id: 'python', label: 'Python' },
	{ id: 'typescript', label: 'TypeScript' }
];

export function pinSnippet(language: SnippetLanguage, { origin, ref, digest }: PinTarget): string {
	const url = `${origin}/api/v1/pins/${ref}`;
	switch (language) {
		case 'curl':
			return `# Fetch ${ref}; Content-Digest (RFC 9530) covers the bytes, "digest" names the version.
curl -sS --fail -D headers.txt -o version.json '${url}'
grep -i '^content-digest:' headers.txt
printf 'sha-256=:%s:\\n' "$(openssl dgst -sha256 -binary version.json | base64)"
test "$(jq -r .digest version.json)" = '${digest}' && echo 'pinned digest matches'
`;
		case 'python':
			return `import hashlib
import json
import urllib.request

import rfc8785  # pip install rfc8785: RFC 8785 canonical JSON

PIN = "${ref}"
EXPECTED = "${digest}"

with urllib.request.urlopen("${url}") as response:
    version = json.load(response)
claimed = version.pop("digest")
actual = "sha256:" + hashlib.sha256(rfc8785.dumps(version)).hexdigest()
if claimed != EXPECTED or actual != EXPECTED:
    raise SystemExit(f"{PIN}: digest mismatch (got {actual})")
print(PIN, version["coefficients"])
`;
		case 'typescript':
			return `import canonicalize from 'canonicalize'; // npm i canonicalize: RFC 8785 canonical JSON

const PIN = '${ref}';
const EXPECTED = '${digest}';

const response = await fetch('${url}');
if (!response.ok) throw new Error(\`\${PIN}: HTTP \${response.status}\`);
const { digest, ...content } = await response.json();
const hash = await crypto.subtle.digest('SHA-256', new TextEncoder().encode(canonicalize(content)));
const actual = 'sha256:' + Array.from(new Uint8Array(hash), (b) => b.toString(16).padStart(2, '0')).join('');
if (digest !== EXPECTED || actual !== EXPECTED) throw new Error(\`\${PIN}: digest mismatch (got \${actual})\`);
console.log(PIN, content.coefficients);
`;
	}
}

export function listSnippet(language: SnippetLanguage, origin: string): string {
	const url = `${origin}/api/v1/relations?band=W_VI&state=active&limit=50`;
	switch (language) {
		case 'curl':
			return `curl -sS --fail '${url}' | jq -r '.items[] | "\\(.slug)@\\(.current.version // "-") \\(.title)"'
# More pages: repeat with &cursor=<next_cursor> until next_cursor is null.
`;
		case 'python':
			return `import json
import urllib.parse
import urllib.request

query = {"band": "W_VI", "state": "active", "limit": 50}
while True:
    with urllib.request.urlopen("${origin}/api/v1/relations?" + urllib.parse.urlencode(query)) as response:
        page = json.load(response)
    for item in page["items"]:
        print(item["slug"], item["current"] and item["current"]["ref"])
    if not page["next_cursor"]:
        break
    query["cursor"] = page["next_cursor"]
`;
		case 'typescript':
			return `const query = new URLSearchParams({ band: 'W_VI', state: 'active', limit: '50' });
for (;;) {
  const response = await fetch(\`${origin}/api/v1/relations?\${query}\`);
  if (!response.ok) throw new Error(\`HTTP \${response.status}\`);
  const page = await response.json();
  for (const item of page.items) console.log(item.slug, item.current?.ref ?? '-');
  if (!page.next_cursor) break;
  query.set('cursor', page.next_cursor);
}
`;
	}
}

export function hubbleSnippet(language: SnippetLanguage, origin: string): string {
	const body = {
		distance_mpc: 20.1,
		distance_mpc_err_stat: 0.3,
		distance_mpc_err_sys: 0.85,
		velocity_frame: 'heliocentric',
		observed_wavelength_nm: 659.25,
		observed_wavelength_nm_err: 0.02,
		observed_medium: 'air',
		ra_deg: 187.7,
		dec_deg: 12.4
	};
	const json = JSON.stringify(body, null, 2);
	const url = `${origin}/api/v1/hubble`;
	switch (language) {
		case 'curl':
			return `# Invented inputs. The answer lists cautions, e.g. peculiar velocities in a nearby galaxy.
curl -sS --fail -H 'content-type: application/json' -d '${JSON.stringify(body)}' '${url}'
`;
		case 'python':
			return `import json
import urllib.request

body = ${json.replace(/"air"/, '"air"')}
request = urllib.request.Request("${url}", data=json.dumps(body).encode(), headers={"content-type": "application/json"})
with urllib.request.urlopen(request) as response:
    estimate = json.load(response)
print(estimate["h0"], "±", estimate["h0_err"], "km/s/Mpc")
for caution in estimate["cautions"]:
    print("caution:", caution["message"])
`;
		case 'typescript':
			return `const response = await fetch('${url}', {
  method: 'POST',
  headers: { 'content-type': 'application/json' },
  body: JSON.stringify(${json.replace(/\n/g, '\n  ')})
});
const estimate = await response.json();
if (!response.ok) throw new Error(estimate.detail);
console.log(estimate.h0, '±', estimate.h0_err, 'km/s/Mpc', estimate.cautions);
`;
	}
}

/** A POST with a JSON body to a path the OpenAPI document lists (used for the distance endpoint). */
export function postSnippet(language: SnippetLanguage, url: string, body: unknown): string {
	const json = JSON.stringify(body);
	switch (language) {
		case 'curl':
			return `curl -sS --fail -H 'content-type: application/json' -d '${json}' '${url}'\n`;
		case 'python':
			return `import json
import urllib.request

request = urllib.request.Request("${url}", data=json.dumps(${json}).encode(), headers={"content-type": "application/json"})
with urllib.request.urlopen(request) as response:
    print(json.load(response))
`;
		case 'typescript':
			return `const response = await fetch('${url}', {
  method: 'POST',
  headers: { 'content-type': 'application/json' },
  body: JSON.stringify(${json})
});
console.log(await response.json());
`;
	}
}

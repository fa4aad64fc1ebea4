"""Verifies a Candlebook archive with Python's standard library (zipfile, hashlib, json).

Usage: verify_archive.py ARCHIVE.zip [PATH ...]. Checks every manifest entry's SHA-256 and size
against the file in the zip, and that the zip holds nothing the manifest does not list (besides the
manifest and README). Prints one JSON object; the named PATHs come back base64-encoded.
"""
import base64
import hashlib
import json
import sys
import zipfile

with zipfile.ZipFile(sys.argv[1]) as archive:
    bad = archive.testzip()
    names = set(archive.namelist())
    manifest = json.loads(archive.read('manifest.json'))
    readme = archive.read('README.txt').decode('utf-8')
    mismatches = []
    for entry in manifest['files']:
        data = archive.read(entry['path'])
        if hashlib.sha256(data).hexdigest() != entry['sha256'] or len(data) != entry['bytes']:
            mismatches.append(entry['path'])
    listed = {entry['path'] for entry in manifest['files']}
    unlisted = sorted(names - listed - {'manifest.json', 'README.txt'})
    files = {path: base64.b64encode(archive.read(path)).decode() for path in sys.argv[2:] if path in names}

print(json.dumps({
    'crc_failure': bad,
    'checked': len(manifest['files']),
    'mismatches': mismatches,
    'unlisted': unlisted,
    'manifest': manifest,
    'readme': readme,
    'files': files,
}))

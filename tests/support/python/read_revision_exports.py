"""Reads one calibrator revision over HTTP in its three formats with astropy (Debian python3-astropy).

Usage: read_revision_exports.py BASE_URL (…/revisions/N). Prints one JSON object with, per format, the
column names and the rows as lists (null for masked or empty cells), plus the VOTable INFO values.
"""
import json
import math
import os
import sys
import tempfile
import urllib.request
from io import BytesIO

import astropy
import numpy
from astropy.io.votable import parse
from astropy.table import Table


def fetch(url):
    with urllib.request.urlopen(url) as response:
        return response.read(), response.headers


def plain(value):
    if hasattr(value, 'item'):
        value = value.item()
    if isinstance(value, float) and math.isnan(value):
        return None
    return value


def table_rows(table):
    names = list(table.colnames)
    masks = [numpy.ma.getmaskarray(table[name]) for name in names]
    rows = [[None if masks[j][i] else plain(table[name][i]) for j, name in enumerate(names)] for i in range(len(table))]
    return names, rows


base = sys.argv[1]
vot_bytes, vot_headers = fetch(base + '?format=votable')
csv_bytes, csv_headers = fetch(base + '?format=csv')

votable = parse(BytesIO(vot_bytes), verify='exception')
vo_table = votable.get_first_table().to_table(use_names_over_ids=True)
infos = {}
for info in votable.resources[0].infos:
    infos.setdefault(info.name, []).append(info.value)
vo_names, vo_rows = table_rows(vo_table)

with tempfile.TemporaryDirectory() as folder:
    path = os.path.join(folder, 'revision.csv')
    with open(path, 'wb') as handle:
        handle.write(csv_bytes)
    csv_table = Table.read(path, format='ascii.csv')
csv_names, csv_rows = table_rows(csv_table)

print(json.dumps({
    'astropy': astropy.__version__,
    'votable': {'names': vo_names, 'rows': vo_rows, 'infos': infos,
                'units': {name: (str(vo_table[name].unit) if vo_table[name].unit else None) for name in vo_names}},
    'csv': {'names': csv_names, 'rows': csv_rows, 'link': csv_headers.get('Link')},
}))

"""Checks a pinned version with Python's standard library only (urllib, hashlib, base64, json).

Usage: pin_digest_check.py URL. Prints one JSON object:
  content_digest_ok  the RFC 9530 Content-Digest header is sha-256 of the body bytes
  canonical_ok       re-serialising the parsed body by RFC 8785 gives the served bytes exactly
  digest_ok          sha256 of RFC 8785 JSON of the body without "digest" equals "digest"
  numbers            how many numbers the body holds
  numbers_unlike_json_dumps  how many of them Python's json.dumps writes differently from
                     ECMAScript's Number::toString (which RFC 8785 prescribes), e.g. 4e-05 vs 0.00004
  json_dumps_equal   whether json.dumps(sort_keys=True, separators=(',', ':'), ensure_ascii=False)
                     alone reproduces the served bytes

RFC 8785 and json.dumps(sort_keys=True, separators=(',',':'), ensure_ascii=False) agree on strings
(both escape only '"', '\\' and U+0000..U+001F, with the short forms \\b \\f \\n \\r \\t) and on key
order for keys inside the Basic Multilingual Plane below U+E000 (RFC 8785 sorts UTF-16 code units,
Python sorts code points). They differ on numbers: RFC 8785 §3.2.2.3 writes them as ECMAScript does,
in plain notation from 1e-6 up to 1e21, while Python's repr switches to exponents below 1e-4 and
above 1e16. So this script writes numbers by the ECMAScript rule, from the shortest round-trip digits
that repr() gives (both languages pick the shortest digit string that reads back as the same double).
"""
import base64
import hashlib
import json
import sys
import urllib.request


def es_number(value):
    """ECMAScript Number::toString (ECMA-262 §6.1.6.1.20) of a finite float or an int."""
    if isinstance(value, int):
        return str(value)
    if value != value or value in (float('inf'), float('-inf')):
        raise ValueError('RFC 8785 has no representation for NaN or infinities')
    if value == 0:
        return '0'
    sign = '-' if value < 0 else ''
    mantissa, _, exponent = repr(abs(value)).partition('e')
    whole, _, fraction = mantissa.partition('.')
    all_digits = (whole + fraction).lstrip('0')
    digits = all_digits.rstrip('0')
    trailing = len(all_digits) - len(digits)
    k = len(digits)
    # value = digits x 10^(n - k)
    n = k + int(exponent or 0) - len(fraction) + trailing
    if k <= n <= 21:
        text = digits + '0' * (n - k)
    elif 0 < n <= 21:
        text = digits[:n] + '.' + digits[n:]
    elif -6 < n <= 0:
        text = '0.' + '0' * (-n) + digits
    else:
        e = n - 1
        text = (digits[0] + ('.' + digits[1:] if k > 1 else '')) + 'e' + ('+' if e >= 0 else '-') + str(abs(e))
    return sign + text


counted = {'numbers': 0, 'unlike': 0}


def canonical(value):
    if value is None:
        return 'null'
    if value is True:
        return 'true'
    if value is False:
        return 'false'
    if isinstance(value, (int, float)):
        text = es_number(value)
        counted['numbers'] += 1
        if json.dumps(value) != text:
            counted['unlike'] += 1
        return text
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, list):
        return '[' + ','.join(canonical(item) for item in value) + ']'
    keys = sorted(value, key=lambda key: key.encode('utf-16-be'))
    return '{' + ','.join(json.dumps(key, ensure_ascii=False) + ':' + canonical(value[key]) for key in keys) + '}'


with urllib.request.urlopen(sys.argv[1]) as response:
    body = response.read()
    header = response.headers['Content-Digest']

parsed = json.loads(body)
expected_header = 'sha-256=:' + base64.b64encode(hashlib.sha256(body).digest()).decode() + ':'
canonical_ok = canonical(parsed).encode('utf-8') == body
without_digest = {key: item for key, item in parsed.items() if key != 'digest'}
counted_before = dict(counted)
computed = 'sha256:' + hashlib.sha256(canonical(without_digest).encode('utf-8')).hexdigest()
naive = json.dumps(parsed, sort_keys=True, separators=(',', ':'), ensure_ascii=False).encode('utf-8')
print(json.dumps({
    'ref': parsed.get('ref'),
    'content_digest_ok': header == expected_header,
    'canonical_ok': canonical_ok,
    'digest_ok': computed == parsed.get('digest'),
    'numbers': counted_before['numbers'],
    'numbers_unlike_json_dumps': counted_before['unlike'],
    'json_dumps_equal': naive == body,
}))

import type { IncomingMessage } from 'node:http';
import { describe, expect, test } from 'vitest';
import { addressSourceFrom, clientAddress } from '../../src/lib/server/edge/client-address';

function request(remoteAddress: string, headers: Record<string, string> = {}): IncomingMessage {
	return { socket: { remoteAddress }, headers } as unknown as IncomingMessage;
}

describe('the address a request is counted against', () => {
	test('is the socket peer without a proxy header, IPv4-mapped IPv6 as IPv4', () => {
		const source = addressSourceFrom({});
		expect(clientAddress(request('::ffff:192.0.2.7'), source)).toBe('192.0.2.7');
		expect(clientAddress(request('2001:db8::1'), source)).toBe('2001:db8::1');
		// A client cannot pick its own address by sending X-Forwarded-For when no proxy is trusted.
		expect(clientAddress(request('192.0.2.7', { 'x-forwarded-for': '203.0.113.1' }), source)).toBe('192.0.2.7');
	});

	test('behind proxies, counts the hop XFF_DEPTH from the right of X-Forwarded-For (as adapter-node)', () => {
		const forwarded = { 'x-forwarded-for': '203.0.113.1, 198.51.100.2, 192.0.2.3' };
		const oneProxy = addressSourceFrom({ ADDRESS_HEADER: 'X-Forwarded-For' });
		expect(clientAddress(request('10.0.0.1', forwarded), oneProxy)).toBe('192.0.2.3');
		const twoProxies = addressSourceFrom({ ADDRESS_HEADER: 'x-forwarded-for', XFF_DEPTH: '2' });
		expect(clientAddress(request('10.0.0.1', forwarded), twoProxies)).toBe('198.51.100.2');
		const tooDeep = addressSourceFrom({ ADDRESS_HEADER: 'x-forwarded-for', XFF_DEPTH: '9' });
		expect(clientAddress(request('10.0.0.1', forwarded), tooDeep)).toBe('203.0.113.1');
		const single = addressSourceFrom({ ADDRESS_HEADER: 'true-client-ip' });
		expect(clientAddress(request('10.0.0.1', { 'true-client-ip': ' 203.0.113.8 ' }), single)).toBe('203.0.113.8');
		expect(clientAddress(request('10.0.0.1'), single)).toBe('10.0.0.1');
	});
});

import type { IncomingMessage } from 'node:http';

/** Where the client's address comes from; the same variables adapter-node reads behind a proxy. */
export interface AddressSource {
	/** A header set by the trusted proxy in front (e.g. `x-forwarded-for`), lower case; empty: the socket. */
	header: string;
	/** With `x-forwarded-for`: how many proxies of our own append to it (adapter-node's XFF_DEPTH). */
	xffDepth: number;
}

export function addressSourceFrom(env: Record<string, string | undefined>): AddressSource {
	const depth = Number.parseInt(env.XFF_DEPTH ?? '1', 10);
	return {
		header: (env.ADDRESS_HEADER ?? '').toLowerCase(),
		xffDepth: Number.isInteger(depth) && depth > 0 ? depth : 1
	};
}

/** The address a request is counted against; IPv4-mapped IPv6 addresses count as their IPv4 form. */
export function clientAddress(request: IncomingMessage, source: AddressSource): string {
	let address = request.socket.remoteAddress ?? 'unknown';
	if (source.header) {
		const raw = request.headers[source.header];
		const value = Array.isArray(raw) ? raw.join(',') : raw;
		if (value) {
			if (source.header === 'x-forwarded-for') {
				const hops = value.split(',').map((hop) => hop.trim());
				address = hops[Math.max(0, hops.length - source.xffDepth)] || address;
			} else {
				address = value.trim();
			}
		}
	}
	return address.startsWith('::ffff:') && address.includes('.') ? address.slice(7) : address;
}

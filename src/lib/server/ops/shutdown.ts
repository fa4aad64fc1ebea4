/**
 * Runs `cleanup` exactly once when the process ends: normally, on Ctrl-C, on SIGTERM or SIGHUP. The
 * cleanup must be synchronous so it also runs inside the 'exit' event.
 */
export function onShutdown(cleanup: () => void): void {
	let done = false;
	const runOnce = () => {
		if (done) return;
		done = true;
		try {
			cleanup();
		} catch (error) {
			console.error('[candlebook] cleanup failed:', error);
		}
	};
	process.on('exit', runOnce);
	const signals: Array<[NodeJS.Signals, number]> = [
		['SIGINT', 130],
		['SIGTERM', 143],
		['SIGHUP', 129]
	];
	for (const [signal, code] of signals) {
		process.on(signal, () => {
			runOnce();
			process.exit(code);
		});
	}
}

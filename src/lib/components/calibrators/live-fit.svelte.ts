import type { FitRequestBody } from './fit-form';
import { readProblem, type ReadableProblem } from './problem-message';

/**
 * Runs fits from the browser as the options change: debounced, the older request abandoned when a
 * newer one starts, and a background job polled until it finishes (`progress` from 0 to 1).
 */
export interface FitJobWire {
	id: string;
	state: 'queued' | 'running' | 'succeeded' | 'failed';
	progress: number;
	stage: string;
	result: Record<string, unknown> | null;
	error: { message?: string } | null;
}

const DEBOUNCE_MS = 450;
const POLL_MS = 700;

export class LiveFit {
	#timer: ReturnType<typeof setTimeout> | undefined;
	#generation = 0;
	status = $state<'idle' | 'waiting' | 'running' | 'done' | 'failed'>('idle');
	job = $state<FitJobWire | null>(null);
	request = $state<FitRequestBody | null>(null);
	problem = $state<ReadableProblem | null>(null);

	/** Fits after a pause in typing; `immediately` for an explicit "run" press. */
	schedule(request: FitRequestBody, immediately = false) {
		clearTimeout(this.#timer);
		this.status = 'waiting';
		this.#timer = setTimeout(() => void this.#run(request), immediately ? 0 : DEBOUNCE_MS);
	}

	cancel() {
		clearTimeout(this.#timer);
		this.#generation++;
	}

	async #run(request: FitRequestBody) {
		const generation = ++this.#generation;
		const current = () => generation === this.#generation;
		this.status = 'running';
		this.problem = null;
		try {
			const response = await fetch('/api/v1/fits', {
				method: 'POST',
				headers: { 'content-type': 'application/json', accept: 'application/json' },
				body: JSON.stringify(request)
			});
			if (!current()) return;
			if (!response.ok) {
				this.problem = await readProblem(response);
				this.status = 'failed';
				return;
			}
			let job = (await response.json()) as FitJobWire;
			this.request = request;
			this.job = job;
			while (current() && (job.state === 'queued' || job.state === 'running')) {
				await new Promise((resolve) => setTimeout(resolve, POLL_MS));
				if (!current()) return;
				const polled = await fetch(`/api/v1/jobs/${job.id}`, { headers: { accept: 'application/json' } });
				if (!polled.ok) {
					this.problem = await readProblem(polled);
					this.status = 'failed';
					return;
				}
				job = (await polled.json()) as FitJobWire;
				if (current()) this.job = job;
			}
			if (!current()) return;
			if (job.state === 'failed') {
				this.problem = { message: job.error?.message ?? 'The fit failed.', details: [] };
				this.status = 'failed';
				return;
			}
			this.status = 'done';
		} catch {
			if (!current()) return;
			this.problem = { message: 'The fit could not be requested: the connection failed.', details: [] };
			this.status = 'failed';
		}
	}
}

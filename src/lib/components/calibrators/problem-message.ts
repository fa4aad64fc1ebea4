/** An RFC 9457 problem+json body (or any failed response) as one readable sentence and its details. */
export interface ReadableProblem {
	message: string;
	details: string[];
}

export async function readProblem(response: Response): Promise<ReadableProblem> {
	let body: { title?: string; detail?: string; errors?: { path?: string; message?: string }[] } = {};
	try {
		body = await response.json();
	} catch {
		// Not JSON: the status alone has to do.
	}
	return {
		message: body.detail ?? body.title ?? `The server answered ${response.status}.`,
		details: (body.errors ?? []).map((e) => (e.path ? `${e.path}: ${e.message ?? ''}` : (e.message ?? '')))
	};
}

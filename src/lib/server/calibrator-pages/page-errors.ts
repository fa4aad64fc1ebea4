import { error, fail, type ActionFailure } from '@sveltejs/kit';
import { RegistryError } from '../registry/errors';

/**
 * Registry refusals on pages: a load turns one into the error page with the service's sentence; an
 * action turns one into a form failure the page shows beside the form (with any field errors).
 */
export async function orPageError<T>(work: () => Promise<T>): Promise<T> {
	try {
		return await work();
	} catch (cause) {
		if (cause instanceof RegistryError) error(cause.status, cause.message);
		throw cause;
	}
}

export interface RefusalBody {
	refusal: { status: number; message: string; errors: { path: string; message: string }[] };
}

export async function orFormFailure<T, E extends Record<string, unknown>>(
	work: () => Promise<T>,
	echo: E
): Promise<T | ActionFailure<E & RefusalBody>> {
	try {
		return await work();
	} catch (cause) {
		if (!(cause instanceof RegistryError)) throw cause;
		return fail(cause.status, {
			...echo,
			refusal: { status: cause.status, message: cause.message, errors: cause.errors }
		});
	}
}

import { error, fail } from '@sveltejs/kit';
import { RegistryError } from '../registry/errors';

/** A page load's registry refusal as SvelteKit's error page (404 also for what the viewer may not see). */
export async function orPageError<T>(work: () => Promise<T>): Promise<T> {
	try {
		return await work();
	} catch (caught) {
		if (caught instanceof RegistryError) error(caught.status, caught.message);
		throw caught;
	}
}

/** A form action's registry refusal as `fail(status, { problem })`, shown beside the form. */
export async function orActionFailure<T>(action: string, work: () => Promise<T>) {
	try {
		return await work();
	} catch (caught) {
		if (caught instanceof RegistryError) {
			return fail(caught.status, {
				action,
				problem: { status: caught.status, title: caught.code, detail: caught.message, errors: caught.errors }
			});
		}
		throw caught;
	}
}

import { getOrm } from '../db';
import { luciaFor, type CandlebookLucia } from './lucia';

/** The app's lucia, bound to the process-wide ORM. */
export async function appLucia(): Promise<CandlebookLucia> {
	return luciaFor(await getOrm());
}

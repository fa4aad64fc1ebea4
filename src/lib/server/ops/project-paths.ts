import { resolve } from 'node:path';

/** The checkout's root folder (this file lives in src/lib/server/ops). */
export const PROJECT_ROOT = resolve(import.meta.dirname, '..', '..', '..', '..');

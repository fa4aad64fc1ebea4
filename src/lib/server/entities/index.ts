import { Session } from './session.entity';
import { User } from './user.entity';

/** Every entity, listed explicitly (no globs: the CLI, scripts and Vite must see the same list). */
export const ENTITIES = [User, Session];

export { Session, User };
export type { SessionEntity } from './session.entity';
export type { Role, UserEntity } from './user.entity';

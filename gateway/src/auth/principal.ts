export type { Principal } from '../http/principal';
/** Kept here for existing callers; the audit capability owns how an actor is recorded. */
export { actorOf } from '../audit/actor';

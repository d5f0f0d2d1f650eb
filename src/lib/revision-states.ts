// The revision states and the events that move a revision between them: the one table the server
// (to refuse) and the pages (to offer only what the server allows) both read. Pure: no database.
import { can, type Action } from './permissions';

/** Triage states of a revision, in the order a revision usually moves through them. */
export const REVISION_STATES = [
	'awaiting-check',
	'checking',
	'held',
	'clear',
	'repair-proposed',
	'signed-off',
	'returned',
	'unreadable',
	'check-incomplete'
] as const;
export type RevisionState = (typeof REVISION_STATES)[number];

export type RevisionEventRule = {
	/** The states the event may start from. */
	from: readonly RevisionState[];
	/** The state the revision is in afterwards. */
	to: RevisionState;
	/** The permission a person needs to cause it; null for events only the check worker causes. */
	permission: Action | null;
};

export const REVISION_EVENTS = {
	/** A worker took up the check. */
	'check-started': { from: ['awaiting-check', 'checking'], to: 'checking', permission: null },
	/** The check finished and every gate rule passed (an upload). */
	'check-passed': { from: ['checking'], to: 'clear', permission: null },
	/** The check finished and at least one blocking rule failed. */
	'check-held': { from: ['checking'], to: 'held', permission: null },
	/** The engine could not read the file itself. */
	'file-unreadable': { from: ['awaiting-check', 'checking'], to: 'unreadable', permission: null },
	/** The check could not finish for a reason on our side (time limit, crash, stored file missing). */
	'check-incomplete': { from: ['awaiting-check', 'checking'], to: 'check-incomplete', permission: null },
	/** The check of a repaired copy passed: it waits for a second person. */
	'repair-proposed': { from: ['checking'], to: 'repair-proposed', permission: null },
	/** Sent back to the designer with a reason. */
	return: { from: ['held', 'clear', 'repair-proposed'], to: 'returned', permission: 'return' },
	/** Cleared for the solver by a reviewer. */
	'sign-off': { from: ['clear', 'repair-proposed'], to: 'signed-off', permission: 'sign-off' },
	/** A repair held only by its repair limits, cleared by a reviewer who records an override with a reason (the server checks that the limits are all that holds it). */
	'sign-off-override': { from: ['held'], to: 'signed-off', permission: 'sign-off' },
	/** Queued for a fresh check. */
	recheck: { from: ['held', 'clear', 'returned', 'unreadable', 'check-incomplete', 'repair-proposed'], to: 'awaiting-check', permission: 'recheck' }
} as const satisfies Record<string, RevisionEventRule>;

export type RevisionEvent = keyof typeof REVISION_EVENTS;
export const REVISION_EVENT_NAMES = Object.keys(REVISION_EVENTS) as RevisionEvent[];

/** Events a person can cause (those with a permission), in table order. */
export const PERSON_EVENTS = REVISION_EVENT_NAMES.filter((e) => REVISION_EVENTS[e].permission !== null);

export function eventRule(event: RevisionEvent): RevisionEventRule {
	return REVISION_EVENTS[event];
}

/** Whether the event may start from this state (whoever causes it). */
export function eventAllowedFrom(event: RevisionEvent, state: RevisionState): boolean {
	return (REVISION_EVENTS[event].from as readonly RevisionState[]).includes(state);
}

type Person = { roles: readonly string[] } | null | undefined;

/**
 * Why a person may not cause the event in this state: `forbidden` (no role allows it, or only the
 * system causes it), `conflict` (the revision is not in a state it starts from), or null (allowed).
 */
export function eventRefusal(user: Person, state: RevisionState, event: RevisionEvent): 'forbidden' | 'conflict' | null {
	const rule = REVISION_EVENTS[event];
	if (rule.permission === null || !can(user, rule.permission)) return 'forbidden';
	if (!eventAllowedFrom(event, state)) return 'conflict';
	return null;
}

/** The events this person may cause on a revision in this state (what pages offer). */
export function allowedEvents(user: Person, state: RevisionState): RevisionEvent[] {
	return PERSON_EVENTS.filter((e) => eventRefusal(user, state, e) === null);
}

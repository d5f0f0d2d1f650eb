import { describe, expect, it } from 'vitest';
import { PERMISSIONS, type RoleName } from './permissions';
import { allowedEvents, eventRefusal, PERSON_EVENTS, REVISION_EVENT_NAMES, REVISION_EVENTS, REVISION_STATES, type RevisionEvent, type RevisionState } from './revision-states';

const ROLES: RoleName[] = ['admin', 'engineer', 'designer', 'reviewer'];

// The expected table, written out by hand: state × event → allowed for which roles.
const PERSON_TABLE: Record<'return' | 'sign-off' | 'sign-off-override' | 'recheck', { roles: RoleName[]; from: RevisionState[] }> = {
	return: { roles: ['engineer', 'reviewer'], from: ['held', 'clear', 'repair-proposed'] },
	'sign-off': { roles: ['reviewer'], from: ['clear', 'repair-proposed'] },
	'sign-off-override': { roles: ['reviewer'], from: ['held'] },
	recheck: { roles: ['engineer'], from: ['held', 'clear', 'returned', 'unreadable', 'check-incomplete', 'repair-proposed'] }
};

describe('revision states and events', () => {
	it('every event goes to a known state from known states', () => {
		for (const e of REVISION_EVENT_NAMES) {
			expect(REVISION_STATES).toContain(REVISION_EVENTS[e].to);
			for (const s of REVISION_EVENTS[e].from) expect(REVISION_STATES).toContain(s);
		}
	});

	it('only return, sign-off (plain or with an override) and re-check are caused by people; the check worker causes the rest', () => {
		expect([...PERSON_EVENTS].sort()).toEqual(['recheck', 'return', 'sign-off', 'sign-off-override']);
	});

	for (const state of REVISION_STATES) {
		for (const event of REVISION_EVENT_NAMES) {
			for (const role of [...ROLES, null]) {
				const user = { roles: role ? [role] : [] };
				const person = PERSON_TABLE[event as keyof typeof PERSON_TABLE];
				const expected = !person || !role || !person.roles.includes(role) ? 'forbidden' : person.from.includes(state) ? null : 'conflict';
				it(`${role ?? 'no role'} · ${event} from ${state}: ${expected ?? 'allowed'}`, () => {
					expect(eventRefusal(user, state, event as RevisionEvent)).toBe(expected);
					expect(allowedEvents(user, state).includes(event as RevisionEvent)).toBe(expected === null);
				});
			}
		}
	}

	it('the permission named for each person event is the one in the permissions table', () => {
		for (const [event, row] of Object.entries(PERSON_TABLE)) {
			const perm = REVISION_EVENTS[event as RevisionEvent].permission!;
			expect([...PERMISSIONS[perm]].sort()).toEqual([...row.roles].sort());
		}
	});

	it('a person with several roles gets the union of what each role allows', () => {
		expect(allowedEvents({ roles: ['engineer', 'reviewer'] }, 'clear').sort()).toEqual(['recheck', 'return', 'sign-off']);
		expect(allowedEvents(null, 'clear')).toEqual([]);
	});
});

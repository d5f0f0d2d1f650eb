// Plain words for the triage states, shared by pages and mails.
export const STATUS_LABEL: Record<string, string> = {
	'awaiting-check': 'Awaiting check',
	checking: 'Checking',
	held: 'Held',
	clear: 'Clear',
	'repair-proposed': 'Repair proposed',
	'signed-off': 'Signed off',
	returned: 'Returned to designer',
	unreadable: 'Unreadable',
	'check-incomplete': 'Check incomplete'
};

export const STATUS_HELP: Record<string, string> = {
	'awaiting-check': 'Uploaded; waiting for a check worker.',
	checking: 'The engine is inspecting the surface.',
	held: 'Failed at least one gate rule; not ready for the solver.',
	clear: 'Passed every gate rule; waits for a reviewer to sign it off.',
	'repair-proposed': 'A repaired copy passed the gate; waits for a different reviewer.',
	'signed-off': 'Cleared for the solver by a reviewer.',
	returned: 'Sent back to the designer with a reason.',
	unreadable: 'The file could not be read; see the reason.',
	'check-incomplete': 'The check could not finish (our side, not the file); see the reason and re-check.'
};

// Repair limits on the server: judging a repair revision's change against the project's limits
// (the check job holds it when outside), and the sign-off guard that asks for an explicit override.
import { judgeRepair, type ChangeMeasures, type LimitJudgement } from '../mesh/repair';
import { repairLimitsOf } from '../gate/profile';
import { DomainError } from '../domain-error';

interface RevLike {
	source: string;
	repairLog: unknown;
}

/** The stored change measures of a repair revision (null for uploads, or repairs stored before they were measured). */
export function storedMeasures(rev: RevLike): ChangeMeasures | null {
	if (rev.source !== 'repair') return null;
	const m = (rev.repairLog as { measures?: ChangeMeasures } | null)?.measures;
	return m && typeof m.facesBefore === 'number' ? m : null;
}

/**
 * The judgement of a repair revision under gate rules (which carry `repairLimits`), or null when
 * the revision is not a measured repair.
 */
export function repairJudgement(rev: RevLike, rules: unknown, project: { targetCellSize: number; units: string }): LimitJudgement | null {
	const m = storedMeasures(rev);
	if (!m) return null;
	return judgeRepair(m, repairLimitsOf(rules), project.targetCellSize, project.units);
}

export interface OverrideInput {
	reason: string;
}

/** Reads `override: { reason }` from an API body or the form field `overrideReason`; null when absent or blank. */
export function parseOverride(raw: unknown): OverrideInput | null {
	const reason = typeof raw === 'string' ? raw : (raw as { reason?: unknown } | null | undefined)?.reason;
	if (typeof reason !== 'string' || !reason.trim()) return null;
	return { reason: reason.trim().slice(0, 2000) };
}

/**
 * Sign-off guard: a repair outside its limits (held by the check for that reason only) is refused
 * unless the reviewer records an override with a reason. Returns the extra state sign-off may start
 * from and the override reason to store on the decision.
 */
export function repairSignOffGuard(
	rev: RevLike & { status: string },
	failedRules: string,
	rules: unknown,
	project: { targetCellSize: number; units: string },
	override: OverrideInput | null
): { allowHeld: boolean; overrideReason: string | null } {
	const j = repairJudgement(rev, rules, project);
	if (!j || j.within) return { allowHeld: false, overrideReason: null };
	if (failedRules) return { allowHeld: false, overrideReason: null }; // held by gate rules too: no override helps
	if (!override) {
		throw new DomainError('conflict', `${j.reason} Signing it off needs an explicit override with a reason.`);
	}
	return { allowHeld: true, overrideReason: override.reason };
}

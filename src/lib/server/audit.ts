import type { Db } from './db';
import { auditEvent } from './db/schema';

type Tx = Pick<Db, 'insert'>;

/** Appends one row to the audit trail; call it inside the transaction that makes the change. */
export async function audit(
	tx: Tx,
	actorId: string | null,
	entity: string,
	entityId: string | number,
	action: string,
	fromState: string | null = null,
	toState: string | null = null,
	detail: unknown = null
): Promise<void> {
	await tx.insert(auditEvent).values({ actorId, entity, entityId: String(entityId), action, fromState, toState, detail });
}

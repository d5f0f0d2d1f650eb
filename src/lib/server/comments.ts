import { asc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { audit } from './audit';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { comment, user } from './db/schema';
import { assertCan, loadRevisionForUser } from './revisions';

const coord = z.number().finite().min(-1e12).max(1e12);

export const commentSchema = z.object({
	body: z.string().trim().min(1, 'Write something.').max(5000, 'At most 5,000 characters.'),
	point: z.tuple([coord, coord, coord]).nullable().optional(),
	face: z.number().int().min(0).max(2 ** 32 - 1).nullable().optional()
});
export type CommentInput = z.infer<typeof commentSchema>;

export async function addComment(db: Db, u: SessionUser, revisionId: number, input: CommentInput) {
	assertCan(u, 'comment');
	const ctx = await loadRevisionForUser(db, u, revisionId);
	return db.transaction(async (tx) => {
		const [r] = await tx
			.insert(comment)
			.values({
				revisionId: ctx.rev.id,
				authorId: u.id,
				body: input.body,
				pointX: input.point?.[0] ?? null,
				pointY: input.point?.[1] ?? null,
				pointZ: input.point?.[2] ?? null,
				face: input.face ?? null
			})
			.$returningId();
		await audit(tx, u.id, 'comment', r.id, 'commented', null, null, { revisionId: ctx.rev.id, pinned: !!input.point });
		return { id: r.id, revisionId: ctx.rev.id, body: input.body, point: input.point ?? null, face: input.face ?? null, author: u.name };
	});
}

export async function listComments(db: Db, revisionId: number) {
	const rows = await db
		.select({ c: comment, author: user.name })
		.from(comment)
		.innerJoin(user, eq(user.id, comment.authorId))
		.where(eq(comment.revisionId, revisionId))
		.orderBy(asc(comment.id));
	return rows.map(({ c, author }) => ({
		id: c.id,
		body: c.body,
		author,
		createdAt: c.createdAt,
		point: c.pointX === null ? null : ([c.pointX, c.pointY!, c.pointZ!] as [number, number, number]),
		face: c.face
	}));
}

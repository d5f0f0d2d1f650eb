// Demo data for `npm start`: a small marine-robotics team, one person per role, three projects.
// Idempotent: rows are found by their natural keys (e-mail, slug) and only created when missing.
import { Readable } from 'node:stream';
import { and, eq, sql } from 'drizzle-orm';
import { hashPassword, newUserId } from '../src/lib/server/auth/password';
import { closeDb, getDb } from '../src/lib/server/db';
import { gateProfile, part, project, team, user, userRole, type Role } from '../src/lib/server/db/schema';
import { DEFAULT_GATE_RULES, type GateRules } from '../src/lib/gate/profile';
import { loadSessionUser } from '../src/lib/server/auth';
import { revision } from '../src/lib/server/db/schema';
import { ingestRevision } from '../src/lib/server/ingest';
import { spool } from '../src/lib/server/storage';
import { demoUploads } from './demo-meshes';

export const DEMO_PASSWORD = 'shellgate-demo';
export const TEAM_NAME = 'Example Cove Robotics';

const PEOPLE: { email: string; name: string; roles: Role[] }[] = [
	{ email: 'admin@example.test', name: 'Ada Admin', roles: ['admin'] },
	{ email: 'engineer@example.test', name: 'Eli Engineer', roles: ['engineer'] },
	{ email: 'designer@example.test', name: 'Dana Designer', roles: ['designer'] },
	{ email: 'reviewer@example.test', name: 'Rui Reviewer', roles: ['reviewer'] }
];

const PROJECTS: {
	slug: string;
	name: string;
	description: string;
	units: 'mm' | 'm';
	flow: [number, number, number];
	cell: number;
	rules: Partial<GateRules>;
	parts: { slug: string; name: string }[];
}[] = [
	{
		slug: 'sensor-pods',
		name: 'Sensor-pod housings',
		description: 'Hull-mounted pods for the side-scan sonar and the CTD probe of the team’s uncrewed survey boat.',
		units: 'mm',
		flow: [1, 0, 0],
		cell: 2,
		rules: {},
		parts: [
			{ slug: 'side-scan-pod', name: 'Side-scan pod' },
			{ slug: 'ctd-pod', name: 'CTD probe pod' }
		]
	},
	{
		slug: 'tow-bodies',
		name: 'Tow bodies',
		description: 'Towed magnetometer bodies; the ring-wing variant is genus 1 on purpose.',
		units: 'mm',
		flow: [1, 0, 0],
		cell: 4,
		rules: { maxShells: 1 },
		parts: [
			{ slug: 'mag-tow-body', name: 'Magnetometer tow body' },
			{ slug: 'ring-wing-body', name: 'Ring-wing tow body' }
		]
	},
	{
		slug: 'keel-bulbs',
		name: 'Keel bulbs',
		description: 'Ballast bulbs for the survey boat’s keel, shaped by the optimiser.',
		units: 'm',
		flow: [1, 0, 0],
		cell: 0.005,
		rules: { expectedGenus: 0 },
		parts: [{ slug: 'keel-bulb-a', name: 'Keel bulb A' }]
	}
];

export async function seed(opts: { meshes?: boolean } = {}): Promise<{ created: number }> {
	const db = getDb();
	let created = 0;
	// An invented name (example.test, like the sign-ins). A database seeded under an earlier demo
	// name keeps its team, found through the demo admin, and takes the new name.
	let [t] = await db.select().from(team).where(eq(team.name, TEAM_NAME)).limit(1);
	if (!t) {
		const [admin] = await db.select({ teamId: user.teamId }).from(user).where(eq(user.email, 'admin@example.test')).limit(1);
		if (admin?.teamId != null) {
			await db.update(team).set({ name: TEAM_NAME }).where(eq(team.id, admin.teamId));
			[t] = await db.select().from(team).where(eq(team.id, admin.teamId)).limit(1);
		}
	}
	if (!t) {
		const [r] = await db.insert(team).values({ name: TEAM_NAME }).$returningId();
		t = { id: r.id, name: TEAM_NAME, createdAt: new Date() };
		created++;
	}
	const passwordHash = await hashPassword(DEMO_PASSWORD);
	const ids: Record<string, string> = {};
	for (const p of PEOPLE) {
		const [u] = await db.select().from(user).where(eq(user.email, p.email)).limit(1);
		if (u) {
			ids[p.email] = u.id;
			continue;
		}
		const id = newUserId();
		await db.transaction(async (tx) => {
			await tx.insert(user).values({ id, email: p.email, name: p.name, teamId: t.id, passwordHash });
			await tx.insert(userRole).values(p.roles.map((role) => ({ userId: id, role })));
		});
		ids[p.email] = id;
		created++;
	}
	for (const pr of PROJECTS) {
		let [row] = await db.select().from(project).where(eq(project.slug, pr.slug)).limit(1);
		if (!row) {
			await db.transaction(async (tx) => {
				const [r] = await tx
					.insert(project)
					.values({ teamId: t.id, slug: pr.slug, name: pr.name, description: pr.description, units: pr.units, flowX: pr.flow[0], flowY: pr.flow[1], flowZ: pr.flow[2], targetCellSize: pr.cell })
					.$returningId();
				await tx.insert(gateProfile).values({ projectId: r.id, version: 1, rules: { ...DEFAULT_GATE_RULES, ...pr.rules }, createdBy: ids['admin@example.test'] });
			});
			[row] = await db.select().from(project).where(eq(project.slug, pr.slug)).limit(1);
			created++;
		}
		for (const pa of pr.parts) {
			const [exists] = await db.select().from(part).where(and(eq(part.projectId, row.id), eq(part.slug, pa.slug))).limit(1);
			if (!exists) {
				await db.insert(part).values({ projectId: row.id, slug: pa.slug, name: pa.name });
				created++;
			}
		}
	}
	if ((opts.meshes ?? true) && process.env.SEED_MESHES !== '0') created += await seedRevisions(ids['designer@example.test']);
	return { created };
}

/** Demo revisions, only into an empty revision table; the app's check workers pick them up. */
async function seedRevisions(designerId: string): Promise<number> {
	const db = getDb();
	const [{ n }] = await db.select({ n: sql<number>`count(*)` }).from(revision);
	if (Number(n) > 0) return 0;
	const designer = (await loadSessionUser(db, designerId))!;
	let created = 0;
	for (const up of demoUploads()) {
		const spooled = await spool(Readable.from([Buffer.from(up.bytes)]), 1024 ** 3);
		await ingestRevision(db, { user: designer, projectSlug: up.project, partSlug: up.part, fileName: up.fileName, spooled, source: 'upload', note: up.note });
		created++;
	}
	return created;
}

if (import.meta.url === `file://${process.argv[1]}`) {
	seed()
		.then(({ created }) => {
			console.log(created ? `demo data: ${created} rows created` : 'demo data: already present, nothing added');
		})
		.catch((e) => {
			console.error('seeding failed:', e.message);
			process.exitCode = 1;
		})
		.finally(() => closeDb());
}

/**
 * The demo case library: invented cases built from the demo rigs, each with a few revisions and motion runs whose
 * summaries and digests come from really running the engine here, a confirmed and a disputed recheck (the
 * reviewer's side reruns the stored runs), comments, a bench trace (a decaying free swing computed by the engine
 * plus a little deterministic noise; the teaching rod also has a free swing and a driven trace, and an r2 with the
 * free swing's fit applied) and one active case link with a well-known token (local demo only, listed in
 * docs/database.md). Goes through the same services as the API, so audit events and outbox mails exist too.
 * Idempotent: a case whose title already exists in the demo lab is left alone.
 */
import type { Sequelize } from 'sequelize';
import { DEMO_RIGS, demoRigCase, templateCase, type CaseParams } from '../../shared/case';
import { computeRun, defaultRunSettings, makeRunRecord, type RunSettings } from '../../shared/engine/run-record';
import { config } from '../config';
import { applyFit } from '../../shared/engine/apply-fit';
import { fitFreeSwing } from '../../shared/engine/fit';
import { syntheticTrace, traceCsv } from '../../shared/engine/synthetic-trace';
import { parseTraceCsv } from '../services/bench-csv';
import { uploadTrace } from '../services/bench-trace-service';
import type { Actor, CaseAccess } from '../services/case-access';
import { addComment, audit, createCase, saveRevision, storeRun } from '../services/case-service';
import { settleRun } from '../services/run-verifier';
import { recordRecheck, requestRecheck } from '../services/recheck-service';
import { hashToken } from '../services/tokens';
import { CaseLink, CaseRecord, Membership, Revision, User, type LabRole } from './models';

/** Token of the seeded case link (local demo only): open /links/<token>. */
export const DEMO_LINK_TOKEN = 'demo-brightwater-crank-rig-link-0001';

interface DemoCase {
  title: string;
  tags: string[];
  author: LabRole;
  /** r1, r2, ... with the note of each */
  revisions: Array<{ params: CaseParams; note: string }>;
  recheck?: { verdict: 'confirmed' | 'disputed'; comment: string };
  comments?: Array<{ who: LabRole; body: string }>;
  benchTrace?: boolean;
  /** a free swing and a driven trace, and a revision with the free swing's fit applied */
  fittedTraces?: boolean;
  link?: boolean;
  /** also store a drive-amplitude sweep (default settings) on the last revision listed above */
  sweep?: boolean;
}

function variant(params: CaseParams, change: (p: CaseParams) => void): CaseParams {
  const copy = JSON.parse(JSON.stringify(params)) as CaseParams;
  change(copy);
  return copy;
}

function rig(id: string): CaseParams {
  const params = demoRigCase(id);
  if (!params) throw new Error(`unknown demo rig ${id}`);
  return params;
}

function demoCases(): DemoCase[] {
  const crank = rig('bench-crank-rig');
  const shaker = rig('shaker-tall-rod');
  const arm = rig('horizontal-arm');
  const teaching = templateCase();
  const [crankRig, shakerRig, armRig] = DEMO_RIGS;
  return [
    {
      title: crankRig?.title ?? 'Bench rig',
      tags: ['bench', 'crank', 'demo'],
      author: 'analyst',
      revisions: [
        { params: variant(crank, (p) => (p.drive.frequency = 22)), note: 'First build: motor at 22 rev/s.' },
        { params: crank, note: 'Motor pulley changed: 25 rev/s.' },
      ],
      recheck: { verdict: 'confirmed', comment: 'Reran the motion run on my machine: same outcome, same digest.' },
      comments: [
        { who: 'reviewer', body: 'Does the 0.2 rad/s² pivot friction come from the spin-down test?' },
        { who: 'analyst', body: 'Yes, from the spin-down on bench 3 last week.' },
      ],
      benchTrace: true,
      link: true,
    },
    {
      title: shakerRig?.title ?? 'Tall rod on a shaker',
      tags: ['shaker', 'demo'],
      author: 'analyst',
      revisions: [
        { params: variant(shaker, (p) => (p.drive.amplitude = 0.007)), note: 'Stroke 7 mm.' },
        { params: variant(shaker, (p) => (p.drive.amplitude = 0.0075)), note: 'Stroke 7.5 mm.' },
        { params: shaker, note: 'Stroke 8 mm: what the shaker gives at 60 Hz.' },
      ],
      recheck: {
        verdict: 'disputed',
        comment: 'The rerun agrees with the stored numbers, but the 0.1 rad start is far beyond what the bench sees; rerun from 0.02 rad before we quote this margin.',
      },
    },
    {
      title: armRig?.title ?? 'Horizontally shaken arm',
      tags: ['horizontal', 'demo'],
      author: 'owner',
      revisions: [{ params: arm, note: 'Sideways drive, started near hanging down.' }],
    },
    {
      title: DEMO_RIGS.find((r) => r.id === 'two-link-shaker')?.title ?? 'Two hinged rods on a shaker',
      tags: ['chain', 'shaker', 'demo'],
      author: 'analyst',
      revisions: [{ params: rig('two-link-shaker'), note: 'Two links as built: 200 mm rod, 150 mm rod hinged on its tip.' }],
    },
    {
      title: 'Teaching rod: point mass on a sine drive',
      tags: ['teaching'],
      author: 'analyst',
      revisions: [{ params: teaching, note: 'The textbook case: 20 cm, 10 mm at 40 Hz.' }],
      fittedTraces: true,
      sweep: true,
    },
  ];
}

/** A free swing hanging down (no drive), angle from the upright in degrees, with ±0.05° of repeatable noise. */
export function syntheticSwingCsv(base: CaseParams): string {
  const swing = variant(base, (p) => {
    p.drive.amplitude = 0;
    p.drive.waveform = { kind: 'sine' };
    p.damping = { viscousRatio: 0.02, quadratic: 0, friction: 0, frictionSmoothing: 0.01 };
    p.start = { angle: Math.PI - 0.25, rate: 0 };
    p.run.duration = 6;
    p.run.outputPoints = 601;
  });
  const result = computeRun(swing, { kind: 'motion' });
  if (result.kind !== 'motion') throw new Error('expected a motion result');
  const { t, theta } = result.value.series;
  let state = 20_241_201;
  const noise = () => {
    state = (Math.imul(state, 1_103_515_245) + 12_345) >>> 0;
    return (state / 2 ** 32 - 0.5) * 0.1;
  };
  const lines = ['# synthetic free swing of the demo rig, computed by the Quiverpoint engine', 'time_s,angle_deg'];
  for (let i = 0; i < t.length; i++) lines.push(`${(t[i] ?? 0).toFixed(4)},${(((theta[i] ?? 0) * 180) / Math.PI + noise()).toFixed(4)}`);
  return `${lines.join('\n')}\n`;
}

/**
 * Stores a run computed here and verifies it at once: the seed is the server's own engine, so its result is the
 * server's rerun (run-verifier.ts settleRun), and every seeded run is `verified` with its full result stored.
 */
async function storeVerifiedRun(sequelize: Sequelize, actor: Actor, access: CaseAccess, number: number, params: CaseParams, settings: RunSettings): Promise<void> {
  const result = computeRun(params, settings);
  const run = await storeRun(sequelize, actor, access, number, makeRunRecord(params, settings, result));
  await settleRun(run, { params, result });
}

const DEG = Math.PI / 180;

/**
 * Synthetic bench traces of a teaching rig whose real rod is a little longer and better damped than the case says
 * (21.2 cm, zeta 0.008): a free swing read from a sensor zeroed 1.5 degrees off, and the rig held by its 40 Hz
 * drive with the pivot position recorded. Both are computed by the engine with seeded noise.
 */
export function syntheticTeachingTraces(base: CaseParams): { swing: string; driven: string; swingLabel: string; drivenLabel: string } {
  const real = variant(base, (p) => {
    p.body = { kind: 'point-mass', length: 0.212, mass: 0.1 };
    p.damping.viscousRatio = 0.008;
  });
  const swing = syntheticTrace(
    variant(real, (p) => {
      p.drive.amplitude = 0;
      p.start = { angle: Math.PI + 25 * DEG, rate: 0 };
    }),
    { sampleRate: 200, duration: 20, noise: 0.05 * DEG, offset: 1.5 * DEG, fromHanging: true, seed: 20_261_202 },
  );
  const driven = syntheticTrace(variant(real, (p) => (p.start = { angle: 0.15, rate: 0 })), {
    sampleRate: 2000, duration: 3, noise: 0.05 * DEG, seed: 20_261_203, pivotNoise: 2e-5,
  });
  return {
    swing: traceCsv(swing, 'synthetic free swing of the teaching rod, computed by the Quiverpoint engine'),
    driven: traceCsv(driven, 'synthetic driven run of the teaching rod at 40 Hz, computed by the Quiverpoint engine'),
    swingLabel: 'Free swing (synthetic)',
    drivenLabel: 'Driven at 40 Hz (synthetic)',
  };
}

/** Adds the demo cases to the lab; returns how many cases it created. */
export async function seedLibrary(sequelize: Sequelize, labId: string): Promise<number> {
  const members = await Membership.findAll({ where: { labId }, include: [{ model: User, as: 'user' }] });
  const actorOf = (role: LabRole): Actor => {
    const m = members.find((x) => x.role === role);
    if (!m?.user) throw new Error(`the demo lab has no ${role}`);
    return { id: m.user.id, name: m.user.name };
  };
  const publicUrl = { publicUrl: config().publicUrl };
  let created = 0;
  for (const demo of demoCases()) {
    if (await CaseRecord.findOne({ where: { labId, title: demo.title } })) continue;
    const author = actorOf(demo.author);
    const [first, ...rest] = demo.revisions;
    if (!first) continue;
    const detail = await createCase(sequelize, author, labId, demo.author, { title: demo.title, tags: demo.tags, params: first.params, note: first.note });
    const access = (role: LabRole): CaseAccess => ({ caseId: detail.id, labId, role, archived: false });
    const motion: RunSettings = { kind: 'motion' };
    await storeVerifiedRun(sequelize, author, access(demo.author), 1, first.params, motion);
    let number = 1;
    for (const next of rest) {
      await saveRevision(sequelize, author, access(demo.author), { baseRevision: number, params: next.params, note: next.note });
      number++;
      await storeVerifiedRun(sequelize, author, access(demo.author), number, next.params, motion);
    }
    const last = rest.at(-1) ?? first;
    if (demo.sweep) await storeVerifiedRun(sequelize, author, access(demo.author), number, last.params, defaultRunSettings('sweep', last.params));
    if (demo.recheck) {
      const reviewer = actorOf('reviewer');
      await requestRecheck(sequelize, publicUrl, author, access(demo.author), number, { reviewerId: reviewer.id, message: 'Please rerun before we order parts.' });
      await recordRecheck(sequelize, publicUrl, reviewer, access('reviewer'), number, { verdict: demo.recheck.verdict, comment: demo.recheck.comment });
    }
    for (const comment of demo.comments ?? []) {
      await addComment(sequelize, actorOf(comment.who), access(comment.who), number, comment.body);
    }
    if (demo.benchTrace) {
      const text = syntheticSwingCsv(first.params);
      await uploadTrace(sequelize, author, access(demo.author), { originalName: 'bench-3-free-swing.csv', text, sizeBytes: Buffer.byteLength(text) }, { label: 'Bench 3 free swing (synthetic)' });
    }
    if (demo.fittedTraces) {
      const traces = syntheticTeachingTraces(first.params);
      const upload = (name: string, text: string, label: string) =>
        uploadTrace(sequelize, author, access(demo.author), { originalName: name, text, sizeBytes: Buffer.byteLength(text) }, { label });
      await upload('teaching-free-swing.csv', traces.swing, traces.swingLabel);
      await upload('teaching-driven-40hz.csv', traces.driven, traces.drivenLabel);
      const parsed = parseTraceCsv(traces.swing, undefined);
      const latest = demo.revisions[demo.revisions.length - 1]?.params ?? first.params;
      const fit = fitFreeSwing(parsed.series, { model: 'viscous', gravity: latest.gravity, frictionSmoothing: latest.damping.frictionSmoothing });
      const applied = applyFit(latest, fit, traces.swingLabel);
      if (!applied) throw new Error('the teaching demo with a trace must be a single body');
      await saveRevision(sequelize, author, access(demo.author), { baseRevision: number, params: applied.params, note: applied.note });
      number++;
      await storeVerifiedRun(sequelize, author, access(demo.author), number, applied.params, motion);
    }
    if (demo.link) {
      const revision = await Revision.findOne({ where: { caseId: detail.id, number } });
      if (!revision) throw new Error('seeded revision missing');
      await sequelize.transaction(async (transaction) => {
        const link = await CaseLink.create(
          { caseId: detail.id, revisionId: revision.id, tokenHash: hashToken(DEMO_LINK_TOKEN), expiresAt: new Date(Date.now() + 365 * 86_400_000), createdById: author.id },
          { transaction },
        );
        await audit(transaction, author.id, labId, 'link.created', detail.id, { linkId: link.id, revision: number, expiresAt: link.expiresAt.toISOString() });
      });
    }
    created++;
  }
  return created;
}

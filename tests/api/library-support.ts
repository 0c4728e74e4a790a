/**
 * Helpers for the case-library API tests: a lab with one member per role plus an outsider, requests as each of
 * them, small valid cases, and run records computed by the real engine.
 */
import type { Express } from 'express';
import request from 'supertest';
import { templateCase, type CaseParams } from '../../shared/case';
import { computeRun, makeRunRecord, type RunRecord } from '../../shared/engine/run-record';
import type { Lab, LabRole, User } from '../../server/db/models';
import { issueToken } from '../../server/services/auth-service';
import { createLab, createUser, type TestApi } from './support';

export const ROLES: LabRole[] = ['owner', 'analyst', 'reviewer', 'viewer'];
export type Who = LabRole | 'outsider';

export interface LabFixture {
  lab: Lab;
  people: Record<Who, User>;
  tokens: Record<Who, string>;
}

/** Tokens come from the server's own issueToken (the sign-in route is tested in auth.spec.ts; argon2 is slow). */
export async function labWithEveryRole(api: TestApi, label: string): Promise<LabFixture> {
  const people = {} as Record<Who, User>;
  const tokens = {} as Record<Who, string>;
  for (const who of [...ROLES, 'outsider'] as const) people[who] = await createUser(`${label}-${who}`);
  const lab = await createLab(ROLES.map((role) => [people[role], role]));
  for (const who of [...ROLES, 'outsider'] as const) tokens[who] = issueToken(people[who], api.config).token;
  return { lab, people, tokens };
}

/** Requests carrying `token` (none when undefined). */
export function client(app: Express, token: string | undefined) {
  const auth = (r: request.Test) => (token ? r.set('Authorization', `Bearer ${token}`) : r);
  return {
    get: (url: string) => auth(request(app).get(url)),
    post: (url: string, body: object = {}) => auth(request(app).post(url)).send(body),
    patch: (url: string, body: object) => auth(request(app).patch(url)).send(body),
    delete: (url: string) => auth(request(app).delete(url)),
  };
}

/** A valid case that the engine runs in a few milliseconds. */
export function quickCase(change: (p: CaseParams) => void = () => undefined): CaseParams {
  const params = templateCase();
  params.run.duration = 0.5;
  params.run.outputPoints = 200;
  change(params);
  return params;
}

/** A motion run record computed by the engine for `params`. */
export function motionRun(params: CaseParams): RunRecord {
  return makeRunRecord(params, { kind: 'motion' }, computeRun(params, { kind: 'motion' }));
}

/** Creates a case through the API as `token`; returns its id. */
export async function createCaseVia(app: Express, token: string, labId: string, body: { title: string; tags?: string[]; params?: CaseParams }): Promise<string> {
  const res = await client(app, token).post(`/api/labs/${labId}/cases`, { tags: [], params: quickCase(), ...body });
  if (res.status !== 201) throw new Error(`case not created: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.id as string;
}

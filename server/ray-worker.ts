/**
 * Worker-thread entry of the ray-tracing pool (server/rays.ts): runs the compute-heavy tasks off
 * the event loop. Tasks and results are plain data (structured clone); transfer data shared
 * between requests lives in SharedArrayBuffers, so binning a cached geometry copies nothing.
 */
import {
  binProfile,
  brokenPowerLaw,
  isotropic,
  l1Distance,
  laorLimbDarkening,
  powerLaw,
  rayWeights,
  tabulated,
  traceTransfer,
  type Cells,
  type DiskGeometry,
  type Emissivity,
  type Transfer,
} from '../physics/lineprofile.js';
import { RayBudgetError } from '../physics/lineprofile.js';
import * as lineprofile from '../physics/lineprofile.js';

/** Serializable emissivity law (rg for radii). */
export type EmissivitySpec =
  | { kind: 'power-law'; index: number }
  | { kind: 'broken-power-law'; indexInner: number; indexOuter: number; rBreak: number }
  | { kind: 'table'; r: number[]; value: number[] };

export interface BinJob {
  emissivity: EmissivitySpec;
  law: 'isotropic' | 'limb-darkened';
  power: 3 | 4;
  /** Bin edges in g, strictly increasing. */
  gEdges: number[];
}

export interface BinResult {
  flux: number[];
  total: number;
  /** L1 distance between the profile and the one from the half-resolution grid (both normalised over the bins). */
  l1Coarse: number;
}

/** Transfer data as sent to workers: the same arrays, backed by SharedArrayBuffers when cached. */
export type SharedTransfer = Pick<Transfer, 'nodeR' | 'nodeG' | 'nodeMu' | 'nodeLnR' | 'cells' | 'coarse'>;

export type RayTask =
  | { kind: 'trace'; geometry: DiskGeometry; part: { index: number; of: number }; maxRays: number }
  | { kind: 'bin'; transfer: SharedTransfer; jobs: BinJob[] }
  | { kind: 'call'; module: string; name: string; args: unknown[] };

export type TraceReply = { ok: true; transfer: Transfer } | { ok: false; budget: number };

export function emissivityOf(spec: EmissivitySpec): Emissivity {
  switch (spec.kind) {
    case 'power-law':
      return powerLaw(spec.index);
    case 'broken-power-law':
      return brokenPowerLaw(spec.indexInner, spec.indexOuter, spec.rBreak);
    case 'table':
      return tabulated(spec.r, spec.value);
  }
}

export function runBinJob(t: SharedTransfer, job: BinJob): BinResult {
  const w = rayWeights(t, { emissivity: emissivityOf(job.emissivity), law: job.law === 'limb-darkened' ? laorLimbDarkening : isotropic, power: job.power });
  const fine = binProfile(t.cells as Cells, w, job.gEdges);
  const coarse = binProfile(t.coarse as Cells, w, job.gEdges);
  return { flux: Array.from(fine.flux), total: fine.total, l1Coarse: l1Distance(fine.flux, coarse.flux) };
}

/** Modules whose exported functions a 'call' task may run (pure physics). */
const CALLABLE: Record<string, Record<string, unknown>> = {
  lineprofile,
};

export default async function run(task: RayTask): Promise<unknown> {
  switch (task.kind) {
    case 'trace':
      try {
        return { ok: true, transfer: traceTransfer(task.geometry, { part: task.part, maxRays: task.maxRays }) } satisfies TraceReply;
      } catch (err) {
        if (err instanceof RayBudgetError) return { ok: false, budget: err.limit } satisfies TraceReply;
        throw err;
      }
    case 'bin':
      return task.jobs.map((job) => runBinJob(task.transfer, job));
    case 'call': {
      const mod = CALLABLE[task.module];
      if (!mod) throw new Error(`unknown module ${task.module}`);
      const fn = mod[task.name];
      if (typeof fn !== 'function') throw new Error(`unknown function ${task.module}.${task.name}`);
      return (fn as (...a: unknown[]) => unknown)(...task.args);
    }
  }
}

// What the report endpoint hands its worker thread, and what comes back.
import type { TimeBound } from '../store/time-bound.ts';

export interface ReportJob {
  storePath: string;
  span: { from?: TimeBound; to?: TimeBound };
  generatedAt: string;
}

export type ReportJobResult = { ok: true; html: string } | { ok: false; code: string; message: string };

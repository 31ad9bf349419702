// An incident as /api/incidents and `floorline incidents --json` give it: one fault, with its member alarms, its
// settled and peak levels, acknowledgement, notes and capture. Pure types: the dashboard imports this module.

export interface IncidentPoint {
  sample: number;
  t: number;
  wallTime: string;
}

export interface IncidentMemberJson {
  rule: string;
  band?: [number, number];
  frequency?: number;
  harmonic?: number;
  /** For coherent lines: the channels the line is coherent on. */
  channels?: string[];
}

export interface IncidentJson {
  id: string;
  channel: string;
  rules: string[];
  members: IncidentMemberJson[];
  start: IncidentPoint;
  end: IncidentPoint | null;
  settled: { levelDb: number; amplitude?: number; frequency?: number } | null;
  peak: { levelDb: number; amplitude?: number; sample: number } | null;
  acknowledged: boolean;
  notes: { text: string; t: number | null; wallTime: string }[];
  capture: string | null;
}

export interface IncidentsReply {
  incidents: IncidentJson[];
}

// A trend query's answer, as /api/trend and `floorline trend --json` give it. Pure types: the dashboard imports it.

export interface TrendRowJson {
  t: number;
  sample: number;
  wallTime: string;
  min: number | null;
  mean: number | null;
  max: number | null;
  gap: boolean;
}

export interface TrendSeriesJson {
  channel: string;
  quantity: 'bandRms' | 'floorDensity' | string;
  band: [number, number] | null;
  unit: string;
  rows: TrendRowJson[];
}

export interface TrendReply {
  every: string;
  series: TrendSeriesJson[];
}

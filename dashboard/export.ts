// Exports: the current spectrum as PNG (the chart canvas with its context line) and any text as a download; the
// CSV text and the context line are in spectrum-csv.ts.

/** One legend entry of the PNG: a channel's name, its colour and its line style. */
export interface PngLegendEntry {
  label: string;
  colour: string;
  dash: number[];
}

/** Height in CSS px of the caption block under the chart: the legend row, then the context and time line. */
export const PNG_CAPTION_PX = 44;

/** The chart canvas on white with, under it, a legend (channel names, colours, dashes, the density unit) and the
 *  context line with the time, so the image stands on its own in a report or a ticket. */
export function spectrumPng(
  chart: HTMLCanvasElement,
  caption: string,
  legend: PngLegendEntry[] = [],
  unitLabel = '',
): Promise<Blob> {
  const scale = chart.width / chart.clientWidth || 1;
  const pad = Math.round(PNG_CAPTION_PX * scale);
  const out = document.createElement('canvas');
  out.width = chart.width;
  out.height = chart.height + pad;
  const c = out.getContext('2d')!;
  c.fillStyle = '#ffffff';
  c.fillRect(0, 0, out.width, out.height);
  c.drawImage(chart, 0, 0);
  c.font = `${Math.round(12 * scale)}px system-ui, sans-serif`;
  c.textBaseline = 'middle';
  let x = 8 * scale;
  const y = chart.height + 12 * scale;
  for (const e of legend) {
    c.strokeStyle = e.colour;
    c.lineWidth = 2 * scale;
    c.setLineDash(e.dash.map((d) => d * scale));
    c.beginPath();
    c.moveTo(x, y);
    c.lineTo(x + 24 * scale, y);
    c.stroke();
    c.setLineDash([]);
    c.fillStyle = '#1c2630';
    c.fillText(e.label, x + 30 * scale, y);
    x += 30 * scale + c.measureText(e.label).width + 16 * scale;
  }
  if (unitLabel) c.fillText(`density in ${unitLabel}`, x, y);
  c.fillStyle = '#1c2630';
  c.fillText(caption, 8 * scale, chart.height + 32 * scale, out.width - 16 * scale);
  return new Promise((resolve, reject) =>
    out.toBlob((b) => (b ? resolve(b) : reject(new Error('PNG export failed'))), 'image/png'),
  );
}

export function download(name: string, data: Blob | string, type = 'text/plain'): void {
  const blob = typeof data === 'string' ? new Blob([data], { type }) : data;
  const a = document.createElement('a');
  a.href = URL.createObjectURL(blob);
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(a.href), 10_000);
}

// Finding a board: by path, or by USB identity (VID:PID, optionally with a serial number, or the serial number
// alone), resolved through SerialPort.list() at every (re)connect so it survives a replug onto another ttyUSBn.
import { readdirSync, realpathSync } from 'node:fs';
import { join } from 'node:path';
import { SerialPort } from 'serialport';

export interface PortEntry {
  path: string;
  /** /dev/serial/by-id/… symlinks that point at this port (stable across replug). */
  byId: string[];
  vendorId?: string;
  productId?: string;
  serialNumber?: string;
  manufacturer?: string;
}

export type PortSpec =
  { kind: 'path'; path: string } | { kind: 'usb'; vendorId?: string; productId?: string; serialNumber?: string };

const HEX4 = /^[0-9a-f]{4}$/i;

/** Parses --port: a path (/dev/…, COMn), VID:PID, VID:PID:SERIAL, or serial=SERIAL. */
export function parsePortSpec(text: string): PortSpec {
  if (text.startsWith('serial=')) {
    const serialNumber = text.slice(7);
    if (!serialNumber) throw new RangeError('--port serial= needs a serial number, e.g. --port serial=FT5XK2QJ');
    return { kind: 'usb', serialNumber };
  }
  const parts = text.split(':');
  if (parts.length >= 2 && HEX4.test(parts[0]) && HEX4.test(parts[1]) && !text.includes('/')) {
    return {
      kind: 'usb',
      vendorId: parts[0].toLowerCase(),
      productId: parts[1].toLowerCase(),
      ...(parts.length > 2 ? { serialNumber: parts.slice(2).join(':') } : {}),
    };
  }
  return { kind: 'path', path: text };
}

export function describeSpec(spec: PortSpec): string {
  if (spec.kind === 'path') return spec.path;
  return [spec.vendorId && `${spec.vendorId}:${spec.productId}`, spec.serialNumber && `serial ${spec.serialNumber}`]
    .filter(Boolean)
    .join(' ');
}

function byIdLinks(dir = '/dev/serial/by-id'): Map<string, string[]> {
  const map = new Map<string, string[]>();
  let names: string[] = [];
  try {
    names = readdirSync(dir);
  } catch {
    return map;
  }
  for (const n of names) {
    try {
      const target = realpathSync(join(dir, n));
      map.set(target, [...(map.get(target) ?? []), join(dir, n)]);
    } catch {
      // a dangling link while a device is unplugged
    }
  }
  return map;
}

export async function listPorts(): Promise<PortEntry[]> {
  const ports = await SerialPort.list();
  const links = byIdLinks();
  return ports.map((p) => ({
    path: p.path,
    byId: links.get(p.path) ?? [],
    ...(p.vendorId ? { vendorId: p.vendorId.toLowerCase() } : {}),
    ...(p.productId ? { productId: p.productId.toLowerCase() } : {}),
    ...(p.serialNumber ? { serialNumber: p.serialNumber } : {}),
    ...(p.manufacturer ? { manufacturer: p.manufacturer } : {}),
  }));
}

/** The matching ports of a USB spec (an empty list if none is plugged in). */
export function matchPorts(entries: readonly PortEntry[], spec: PortSpec): PortEntry[] {
  if (spec.kind === 'path') return entries.filter((e) => e.path === spec.path || e.byId.includes(spec.path));
  return entries.filter(
    (e) =>
      (spec.vendorId === undefined || e.vendorId === spec.vendorId) &&
      (spec.productId === undefined || e.productId === spec.productId) &&
      (spec.serialNumber === undefined || e.serialNumber === spec.serialNumber),
  );
}

/** Path to open now: the spec's path, or the one port matching its USB identity; undefined if none is present. */
export async function resolvePort(spec: PortSpec): Promise<string | undefined> {
  if (spec.kind === 'path') return spec.path;
  const found = matchPorts(await listPorts(), spec);
  if (found.length > 1) {
    throw new RangeError(
      `--port ${describeSpec(spec)} matches ${found.length} ports (${found.map((f) => f.path).join(', ')}); add the serial number, e.g. --port ${found[0].vendorId}:${found[0].productId}:${found[0].serialNumber ?? 'SERIAL'}`,
    );
  }
  return found[0]?.path;
}

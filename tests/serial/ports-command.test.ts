import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, realpathSync } from 'node:fs';
import { join } from 'node:path';
import { matchPorts, parsePortSpec, type PortEntry } from '../../agent/sources/port-resolve.ts';

const root = new URL('../..', import.meta.url).pathname;

describe('port resolution', () => {
  it('reads --port as a path, VID:PID, VID:PID:SERIAL or serial=SERIAL', () => {
    expect(parsePortSpec('/dev/ttyUSB0')).toEqual({ kind: 'path', path: '/dev/ttyUSB0' });
    expect(parsePortSpec('0403:6015')).toEqual({ kind: 'usb', vendorId: '0403', productId: '6015' });
    expect(parsePortSpec('0403:6015:FT5XK2QJ')).toEqual({
      kind: 'usb',
      vendorId: '0403',
      productId: '6015',
      serialNumber: 'FT5XK2QJ',
    });
    expect(parsePortSpec('serial=A9Q1')).toEqual({ kind: 'usb', serialNumber: 'A9Q1' });
  });

  it('matches a board by USB id wherever it enumerates, and by its by-id link', () => {
    // 0403:6001 is FTDI's FT232R vendor:product pair (from memory; the USB ID repository lists it).
    const ports: PortEntry[] = [
      {
        path: '/dev/ttyUSB1',
        byId: ['/dev/serial/by-id/usb-FTDI_FT232R_A1-if00-port0'],
        vendorId: '0403',
        productId: '6001',
        serialNumber: 'A1',
      },
      { path: '/dev/ttyUSB2', byId: [], vendorId: '0403', productId: '6001', serialNumber: 'B2' },
      { path: '/dev/ttyACM0', byId: [], vendorId: '2e8a', productId: '000a', serialNumber: 'E66' },
    ];
    expect(matchPorts(ports, parsePortSpec('0403:6001:B2')).map((p) => p.path)).toEqual(['/dev/ttyUSB2']);
    expect(matchPorts(ports, parsePortSpec('0403:6001')).length).toBe(2);
    expect(matchPorts(ports, parsePortSpec('serial=E66')).map((p) => p.path)).toEqual(['/dev/ttyACM0']);
    expect(
      matchPorts(ports, parsePortSpec('/dev/serial/by-id/usb-FTDI_FT232R_A1-if00-port0')).map((p) => p.path),
    ).toEqual(['/dev/ttyUSB1']);
  });

  it('`floorline ports --json` lists exactly the USB serial devices the kernel shows, with their udev by-id links', () => {
    const r = spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), 'ports', '--json'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const list = JSON.parse(r.stdout) as PortEntry[];
    expect(Array.isArray(list)).toBe(true);
    // The outside view: the kernel's USB serial nodes (ttyUSB = usb-serial bridges, ttyACM = CDC/ACM) and udev's
    // /dev/serial/by-id links to them. On a machine with none, both sides are empty and only the command's
    // success and output shape are checked.
    const kernel = readdirSync('/dev')
      .filter((n) => /^tty(USB|ACM)\d+$/.test(n))
      .map((n) => `/dev/${n}`)
      .sort();
    const listedUsb = list
      .map((p) => p.path)
      .filter((p) => /^\/dev\/tty(USB|ACM)\d+$/.test(p))
      .sort();
    expect(listedUsb).toEqual(kernel);
    const byIdDir = '/dev/serial/by-id';
    const links = existsSync(byIdDir) ? readdirSync(byIdDir).map((n) => join(byIdDir, n)) : [];
    for (const link of links) {
      const entry = list.find((p) => p.path === realpathSync(link));
      expect(entry?.byId, `${link} → ${realpathSync(link)}`).toContain(link);
    }
    for (const p of list) {
      expect(existsSync(p.path)).toBe(true);
      for (const link of p.byId) expect(realpathSync(link)).toBe(p.path);
    }
  });
});

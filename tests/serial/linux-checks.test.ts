import { describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { latencyHint, modemManagerHint } from '../../agent/sources/linux-checks.ts';

// Trees laid out as Linux exposes them (common practice, from the kernel's ftdi_sio sysfs attribute
// /sys/bus/usb-serial/devices/ttyUSBn/latency_timer, default 16 ms, and /proc/PID/comm).
function roots(latency: string | undefined, comms: string[]): { sys: string; proc: string; etcGroup: string } {
  const base = mkdtempSync(join(tmpdir(), 'fl-checks-'));
  const sys = join(base, 'sys');
  const proc = join(base, 'proc');
  if (latency !== undefined) {
    mkdirSync(join(sys, 'bus/usb-serial/devices/ttyUSB3'), { recursive: true });
    writeFileSync(join(sys, 'bus/usb-serial/devices/ttyUSB3/latency_timer'), latency);
  }
  comms.forEach((c, i) => {
    mkdirSync(join(proc, String(100 + i)), { recursive: true });
    writeFileSync(join(proc, String(100 + i), 'comm'), `${c}\n`);
  });
  mkdirSync(join(proc, 'self'), { recursive: true });
  return { sys, proc, etcGroup: join(base, 'group') };
}

describe('Linux start-up checks', () => {
  it('hints at the FTDI latency timer when it is above 1 ms, and stays quiet at 1 ms or for other devices', () => {
    expect(latencyHint('/dev/ttyUSB3', roots('16\n', []))).toMatch(
      /16 ms.*echo 1 \| sudo tee .*ttyUSB3\/latency_timer/,
    );
    expect(latencyHint('/dev/ttyUSB3', roots('1\n', []))).toBeUndefined();
    expect(latencyHint('/dev/ttyACM0', roots(undefined, []))).toBeUndefined();
  });

  it('names a running ModemManager with its pid and the fix', () => {
    expect(modemManagerHint(roots(undefined, ['bash', 'ModemManager']))).toMatch(
      /ModemManager \(pid 101\).*systemctl stop ModemManager/,
    );
    expect(modemManagerHint(roots(undefined, ['bash', 'sshd']))).toBeUndefined();
  });
});

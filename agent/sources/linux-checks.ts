// Start-up checks on Linux, each with the fix: access to the device (the dialout group), the FTDI latency timer
// (16 ms by default on ftdi_sio; 1 ms avoids bursty 16 ms reads), and a modem manager probing the port.
// Roots are parameters so tests can point them at a prepared tree.
import { accessSync, constants, readFileSync, readdirSync, realpathSync, statSync } from 'node:fs';
import { basename, join } from 'node:path';

export interface CheckRoots {
  sys: string;
  proc: string;
  etcGroup: string;
}

const LINUX: CheckRoots = { sys: '/sys', proc: '/proc', etcGroup: '/etc/group' };

function groupName(gid: number, etcGroup: string): string {
  try {
    for (const line of readFileSync(etcGroup, 'utf8').split('\n')) {
      const [name, , id] = line.split(':');
      if (Number(id) === gid) return name;
    }
  } catch {
    // no /etc/group: fall back to the number
  }
  return String(gid);
}

export function permissionHint(path: string, roots: CheckRoots = LINUX): string | undefined {
  try {
    accessSync(path, constants.R_OK | constants.W_OK);
    return undefined;
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code !== 'EACCES' && code !== 'EPERM') return undefined;
    let group = 'dialout';
    try {
      group = groupName(statSync(path).gid, roots.etcGroup);
    } catch {
      // keep the usual name
    }
    return `no permission to open ${path}: add yourself to its group (sudo usermod -aG ${group} $USER, then log in again)`;
  }
}

export function latencyHint(path: string, roots: CheckRoots = LINUX): string | undefined {
  let tty: string;
  try {
    tty = basename(realpathSync(path));
  } catch {
    tty = basename(path);
  }
  const file = join(roots.sys, 'bus/usb-serial/devices', tty, 'latency_timer');
  let ms: number;
  try {
    ms = Number(readFileSync(file, 'utf8').trim());
  } catch {
    return undefined; // not a usb-serial (FTDI-style) device
  }
  if (!(ms > 1)) return undefined;
  return `${tty}: FTDI latency timer is ${ms} ms, data arrives in bursts; set it to 1 ms: echo 1 | sudo tee ${file} (or a udev rule ATTR{latency_timer}="1")`;
}

export function modemManagerHint(roots: CheckRoots = LINUX): string | undefined {
  let pids: string[];
  try {
    pids = readdirSync(roots.proc).filter((n) => /^\d+$/.test(n));
  } catch {
    return undefined;
  }
  for (const pid of pids) {
    try {
      if (readFileSync(join(roots.proc, pid, 'comm'), 'utf8').trim() === 'ModemManager') {
        return `ModemManager (pid ${pid}) is running and may open the port to probe it, sending AT commands and stealing bytes; stop it (sudo systemctl stop ModemManager) or mark the device ID_MM_DEVICE_IGNORE=1 in a udev rule`;
      }
    } catch {
      // the process ended while we looked
    }
  }
  return undefined;
}

/** All hints for a port path, in the order a user should act on them. */
export function startupChecks(path: string, roots: CheckRoots = LINUX): string[] {
  if (process.platform !== 'linux' && roots === LINUX) return [];
  return [permissionHint(path, roots), modemManagerHint(roots), latencyHint(path, roots)].filter(
    (h): h is string => h !== undefined,
  );
}

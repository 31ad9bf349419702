// `floorline ports`: the serial ports SerialPort.list() sees, with their stable /dev/serial/by-id paths and USB ids.
import { defineCommand, type ParsedArgs } from '../args.ts';
import { listPorts } from '../../sources/port-resolve.ts';

const PORTS_FLAGS = [{ name: 'json', kind: 'boolean', help: 'print the list as JSON' }] as const;

async function run(args: ParsedArgs<typeof PORTS_FLAGS>): Promise<number> {
  const ports = await listPorts();
  if (args.flags.json) {
    process.stdout.write(`${JSON.stringify(ports, null, 2)}\n`);
    return 0;
  }
  if (ports.length === 0) {
    process.stdout.write(
      'no serial ports found (pseudo-terminals such as socat pairs are not listed; give their path to --port).\n',
    );
    return 0;
  }
  for (const p of ports) {
    const usb = p.vendorId ? `${p.vendorId}:${p.productId}` : '-';
    process.stdout.write(`${p.path}\n`);
    for (const link of p.byId) process.stdout.write(`  stable path   ${link}\n`);
    process.stdout.write(
      `  usb id        ${usb}${p.serialNumber ? `  serial ${p.serialNumber}` : ''}${p.manufacturer ? `  (${p.manufacturer})` : ''}\n`,
    );
    if (p.vendorId) {
      process.stdout.write(
        `  open with     --port ${p.byId[0] ?? `${p.vendorId}:${p.productId}${p.serialNumber ? `:${p.serialNumber}` : ''}`}\n`,
      );
    }
  }
  return 0;
}

export const portsCommand = defineCommand({
  name: 'ports',
  summary:
    'list serial ports with their stable /dev/serial/by-id paths and USB ids (vendor:product, serial, manufacturer)',
  details: [
    '`floorline run --port` takes a path, VID:PID, VID:PID:SERIAL or serial=SERIAL; USB ids are looked up again',
    'at every reconnect, so the board is found after a replug even if it comes back as another ttyUSBn.',
  ].join('\n'),
  positionals: [],
  flags: PORTS_FLAGS,
  run,
});

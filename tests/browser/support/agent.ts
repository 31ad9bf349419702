// Runs the real agent (`node bin/floorline.mjs replay …`, the bundled CLI) as a child process and reads the
// dashboard URL it prints.
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';

const ROOT = new URL('../../../', import.meta.url).pathname;

export interface Agent {
  url: string;
  port: number;
  proc: ChildProcess;
  output(): string;
  stop(): Promise<void>;
}

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
  });
}

export function startAgent(args: string[], timeoutMs = 20_000): Promise<Agent> {
  return new Promise((resolve, reject) => {
    const proc = spawn(process.execPath, ['bin/floorline.mjs', ...args], {
      cwd: ROOT,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    const timer = setTimeout(
      () => reject(new Error(`agent did not print its URL within ${timeoutMs} ms:\n${out}`)),
      timeoutMs,
    );
    const onData = (d: Buffer): void => {
      out += d.toString();
      const m = /dashboard\s+(http:\/\/\S+)/.exec(out);
      if (m) {
        clearTimeout(timer);
        proc.stdout!.off('data', onData);
        proc.stdout!.on('data', (x: Buffer) => (out += x.toString()));
        const url = m[1];
        resolve({
          url,
          port: Number(new URL(url).port),
          proc,
          output: () => out,
          stop: () =>
            new Promise((done) => {
              if (proc.exitCode !== null) return done();
              proc.once('exit', () => done());
              proc.kill('SIGTERM');
            }),
        });
      }
    };
    proc.stdout!.on('data', onData);
    proc.stderr!.on('data', (d: Buffer) => (out += d.toString()));
    proc.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`agent exited with ${code} before serving:\n${out}`));
    });
  });
}

// Structured log lines for running under a service manager: each line the agent writes to stdout or stderr becomes
// one JSON object {time, level, command, stream, msg}, with every registered secret (access token, webhook header
// values) replaced. On by FLOORLINE_LOG=json, or by default when the output is not a terminal and a service
// manager started the process (it sets INVOCATION_ID / JOURNAL_STREAM); FLOORLINE_LOG=text keeps plain lines.
const secrets = new Set<string>();

/** A value that must never appear in a log line (ignored when too short to be a secret worth hiding). */
export function registerSecret(value: string | undefined): void {
  if (value && value.length >= 4) secrets.add(value);
}

export function redact(text: string): string {
  let out = text;
  for (const s of secrets) {
    out = out.split(s).join('(hidden)');
    const enc = encodeURIComponent(s);
    if (enc !== s) out = out.split(enc).join('(hidden)');
  }
  return out;
}

export function structuredLogsWanted(
  env: NodeJS.ProcessEnv = process.env,
  isTTY = process.stderr.isTTY === true,
): boolean {
  if (env.FLOORLINE_LOG === 'json') return true;
  if (env.FLOORLINE_LOG === 'text') return false;
  return !isTTY && (env.INVOCATION_ID !== undefined || env.JOURNAL_STREAM !== undefined);
}

/** Level of a line of the agent's own wording. */
export function levelOf(stream: 'stdout' | 'stderr', line: string): 'error' | 'warn' | 'info' {
  if (/\b(error|failed|cannot|refused|FAILED)\b/.test(line)) return 'error';
  if (stream === 'stderr' || /\bwarning\b/.test(line)) return 'warn';
  return 'info';
}

let installed = false;

/** Rewrites stdout and stderr as JSON lines (once per process). */
export function installStructuredLogs(command: string): void {
  if (installed) return;
  installed = true;
  for (const stream of ['stdout', 'stderr'] as const) {
    const target = process[stream];
    const write = target.write.bind(target) as (chunk: string) => boolean;
    let pending = '';
    target.write = ((chunk: string | Uint8Array, ...rest: unknown[]): boolean => {
      pending += typeof chunk === 'string' ? chunk : Buffer.from(chunk).toString('utf8');
      let nl: number;
      let ok = true;
      while ((nl = pending.indexOf('\n')) >= 0) {
        const line = pending.slice(0, nl);
        pending = pending.slice(nl + 1);
        if (!line.trim()) continue;
        const msg = redact(line);
        ok = write(
          JSON.stringify({ time: new Date().toISOString(), level: levelOf(stream, msg), command, stream, msg }) + '\n',
        );
      }
      const cb = rest.find((r) => typeof r === 'function') as (() => void) | undefined;
      cb?.();
      return ok;
    }) as typeof target.write;
  }
}

// Every client message is validated before the backend sees it; refusals name the field and keep the request id.
import { describe, expect, it } from 'vitest';
import { parseClientMessage } from '../../agent/server/validate.ts';

const ok = (o: unknown) => parseClientMessage(JSON.stringify(o));

describe('parseClientMessage', () => {
  it('accepts each request type in its documented shape', () => {
    for (const m of [
      { type: 'capture-baseline', id: 1, seconds: 20, name: 'bench-a.json', notes: 'lid closed' },
      { type: 'recording', id: 2, action: 'start' },
      { type: 'set-analysis', id: 3, averaging: { mode: 'rolling', count: 16 }, segment: 8192, window: 'kaiser:3' },
      { type: 'set-analysis', id: 4, averaging: { mode: 'exponential', tauSeconds: 5 } },
      { type: 'acknowledge', id: 5, alarm: 'band-rise/ch0:20-2000' },
      { type: 'shelve', id: 7, alarm: 'mains/ch0/h3', seconds: 600 },
      { type: 'get-status', id: 6 },
      { type: 'restore-baseline', id: 8 },
    ]) {
      const r = ok(m);
      expect(r, JSON.stringify(m)).toEqual({ ok: true, message: m });
    }
  });

  it.each([
    [{ type: 'set-analysis', id: 1, segment: 1000 }, /power of two/],
    [{ type: 'set-analysis', id: 1, segment: 32 }, /segment/],
    [{ type: 'set-analysis', id: 1 }, /at least one/],
    [{ type: 'set-analysis', id: 1, averaging: { mode: 'rolling' } }, /count/],
    [{ type: 'set-analysis', id: 1, averaging: { mode: 'mean', count: 3 } }, /unknown field 'count'/],
    [{ type: 'set-analysis', id: 1, averaging: { mode: 'weekly' } }, /not one of/],
    [{ type: 'set-analysis', id: 1, window: 'Hann; rm -rf' }, /window/],
    [{ type: 'capture-baseline', id: 1, seconds: -1 }, /seconds/],
    [{ type: 'capture-baseline', id: 1, seconds: 1e9 }, /seconds/],
    [{ type: 'recording', id: 1, action: 'pause' }, /action/],
    [{ type: 'acknowledge', id: 1, rule: 'band-rise', channel: 'ch0' }, /unknown field 'rule'/],
    [{ type: 'acknowledge', id: 1, alarm: 'no rule here' }, /not an alarm or incident id/],
    [{ type: 'acknowledge', id: 1, alarm: 'clip/ch0\u0007' }, /not an alarm or incident id/],
    [{ type: 'shelve', id: 1, alarm: 'clip/ch0', seconds: 0 }, /seconds/],
    [{ type: 'get-status', id: 1, extra: true }, /unknown field 'extra'/],
    [{ type: 'restore-baseline', id: 1, file: 'baselines/old.json' }, /'restore-baseline' has an unknown field 'file'/],
  ])('refuses %j as bad-message, naming the problem', (m, why) => {
    const r = ok(m);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.error.code).toBe('bad-message');
    expect(r.error.message).toMatch(why);
    expect(r.id).toBe(1);
  });

  it('refuses baseline names with folders or dots as path-refused', () => {
    for (const name of ['../x.json', 'a/b.json', '.hidden', '/etc/passwd', 'x..json', 'C:\\x.json']) {
      const r = ok({ type: 'capture-baseline', id: 9, seconds: 1, name });
      expect(r.ok === false && r.error.code, name).toBe('path-refused');
    }
  });

  it('tells bad JSON, non-objects, unknown types and bad ids apart', () => {
    expect(
      parseClientMessage('{').ok === false && (parseClientMessage('{') as { error: { code: string } }).error.code,
    ).toBe('bad-json');
    const arr = parseClientMessage('[1,2]');
    expect(arr.ok === false && arr.error.code).toBe('bad-message');
    const unk = ok({ type: 'reboot', id: 1 });
    expect(unk.ok === false && unk.error.code).toBe('unknown-type');
    const proto = ok({ type: '__proto__', id: 1 });
    expect(proto.ok === false && proto.error.code).toBe('unknown-type');
    const noId = ok({ type: 'get-status', id: -1 });
    expect(noId.ok === false && noId.error.code).toBe('bad-message');
    expect(noId.ok === false && noId.id).toBe(undefined);
  });
});

// A request to the monitor it will not carry out; `code` goes to a dashboard client as the reply's error code.
export type RefusalCode = 'unsupported' | 'failed' | 'path-refused' | 'bad-message' | 'exists' | 'rate-limited';

export class MonitorRefusal extends Error {
  override readonly name = 'MonitorRefusal';
  constructor(
    readonly code: RefusalCode,
    message: string,
  ) {
    super(message);
  }
}

// A typed subscriber list, and the boundary of every subscriber (recorder, history store, notifier, server…): one
// that throws is cut off there, never taking acquisition or the other subscribers with it. The failure is
// reported once through onFailure (the pipeline turns it into an `internal` event), and every listener of the
// same owner is removed, so a part is either whole or off, never half-running.
export type Listener<T> = (value: T) => void;

interface Entry {
  fn: Listener<never>;
  owner: string | undefined;
}

export class Emitter<M> {
  private readonly lists = new Map<keyof M, Entry[]>();
  private readonly failed = new Set<string>();

  constructor(private readonly onFailure: (owner: string, event: string, err: Error) => void = defaultFailure) {}

  /** `owner` names the part (e.g. "recorder"): all its listeners go together when one of them fails. */
  on<K extends keyof M>(name: K, fn: Listener<M[K]>, owner?: string): () => void {
    const list = this.lists.get(name) ?? [];
    this.lists.set(name, [...list, { fn: fn as Listener<never>, owner }]);
    return () => {
      const l = this.lists.get(name);
      if (l)
        this.lists.set(
          name,
          l.filter((x) => x.fn !== fn),
        );
    };
  }

  has<K extends keyof M>(name: K): boolean {
    return (this.lists.get(name)?.length ?? 0) > 0;
  }

  emit<K extends keyof M>(name: K, value: M[K]): void {
    const list = this.lists.get(name);
    if (!list) return;
    for (let i = 0; i < list.length; i++) {
      const entry = list[i];
      try {
        (entry.fn as Listener<M[K]>)(value);
      } catch (err) {
        this.cutOff(entry, String(name), err instanceof Error ? err : new Error(String(err)));
      }
    }
  }

  private cutOff(entry: Entry, event: string, err: Error): void {
    const owner = entry.owner ?? `a '${event}' subscriber`;
    for (const [k, l] of this.lists)
      this.lists.set(
        k,
        l.filter((x) => x !== entry && (entry.owner === undefined || x.owner !== entry.owner)),
      );
    if (this.failed.has(owner) && entry.owner !== undefined) return;
    this.failed.add(owner);
    this.onFailure(owner, event, err);
  }
}

function defaultFailure(owner: string, event: string, err: Error): void {
  process.stderr.write(`floorline: ${owner} failed on '${event}' and is disabled: ${err.message}\n`);
}

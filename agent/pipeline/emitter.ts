// A typed subscriber list. A subscriber that throws is reported once on stderr and does not stop the others:
// a faulty dashboard client must never stall acquisition.
export type Listener<T> = (value: T) => void;

export class Emitter<M> {
  private readonly lists = new Map<keyof M, Listener<never>[]>();
  private readonly warned = new Set<Listener<never>>();

  on<K extends keyof M>(name: K, fn: Listener<M[K]>): () => void {
    const list = this.lists.get(name) ?? [];
    list.push(fn as Listener<never>);
    this.lists.set(name, list);
    return () => {
      const l = this.lists.get(name);
      if (l) this.lists.set(name, l.filter((x) => x !== fn));
    };
  }

  has<K extends keyof M>(name: K): boolean {
    return (this.lists.get(name)?.length ?? 0) > 0;
  }

  emit<K extends keyof M>(name: K, value: M[K]): void {
    const list = this.lists.get(name);
    if (!list) return;
    for (let i = 0; i < list.length; i++) {
      const fn = list[i] as Listener<M[K]>;
      try {
        fn(value);
      } catch (err) {
        if (!this.warned.has(list[i])) {
          this.warned.add(list[i]);
          process.stderr.write(`floorline: a '${String(name)}' subscriber failed: ${(err as Error).message}\n`);
        }
      }
    }
  }
}

/**
 * Runs `pass` again and again: straight on (after yielding to the event loop) while it says more
 * work is waiting, else after `idleMs`. `stop()` wakes a sleeping loop and waits for the pass in
 * flight, so a worker stops between two units of work. Errors are reported and the loop goes on.
 */
export class PollLoop {
  private running = false;
  private loop: Promise<void> | undefined;
  private wake: (() => void) | undefined;

  constructor(
    private readonly pass: () => Promise<boolean>,
    private readonly idleMs: () => number,
    private readonly onError: (err: unknown) => void,
  ) {}

  get isRunning(): boolean {
    return this.running;
  }

  start(): void {
    if (this.running) return;
    this.running = true;
    this.loop = this.run();
  }

  async stop(): Promise<void> {
    this.running = false;
    this.wake?.();
    await this.loop;
  }

  private async run(): Promise<void> {
    while (this.running) {
      let more = false;
      try {
        more = await this.pass();
      } catch (err) {
        this.onError(err);
      }
      if (!this.running) break;
      await new Promise<void>((resolve) => {
        const t = setTimeout(resolve, more ? 0 : this.idleMs());
        this.wake = () => {
          clearTimeout(t);
          resolve();
        };
      });
    }
  }
}

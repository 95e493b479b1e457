/** Collects cleanup callbacks; run them in reverse order in afterEach. */
export class Teardown {
  private readonly steps: (() => unknown)[] = [];
  add(step: () => unknown): void {
    this.steps.push(step);
  }
  async run(): Promise<void> {
    while (this.steps.length > 0) {
      const step = this.steps.pop()!;
      try {
        await step();
      } catch {
        // keep tearing down the rest
      }
    }
  }
}

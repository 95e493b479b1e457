/** A view owns the <main> element while it is shown. */
export interface View {
  mount(el: HTMLElement): void | Promise<void>;
  unmount(): void;
}

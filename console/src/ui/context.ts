import type { Signed } from '../api/client.ts';
import type { NearveilAdmin } from '../api/nearveil.ts';

/** What every screen gets: who is signed in, the typed API, and the dataset in view. */
export interface ConsoleContext {
  signed: Signed;
  api: NearveilAdmin;
  /** The dataset the screens work on; shared so switching screens keeps it. */
  dataset: string | null;
  setDataset(slug: string | null): void;
  go(screen: ScreenName): void;
}

export type ScreenName = 'sheet' | 'versions' | 'map' | 'cost' | 'keys' | 'team';

export interface Screen {
  element: HTMLElement;
  /** Called each time the screen is shown (reload lists, redraw canvases). */
  show(): void;
}

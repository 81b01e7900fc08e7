/// <reference lib="webworker" />
import type { Manifest } from '../../../core/geo/manifest.ts';
import { computeMapData } from './region-lists.ts';

// Lists take a second or more for thousands of sites: off the page's thread, so the console stays responsive.
self.onmessage = (event: MessageEvent<{ csv: string; manifest: Manifest }>) => {
  try {
    self.postMessage({ ok: true, data: computeMapData(event.data.csv, event.data.manifest) });
  } catch (err) {
    self.postMessage({ ok: false, message: err instanceof Error ? err.message : String(err) });
  }
};

import { nearestCandidates } from '../../../core/geo/candidates.ts';
import { isFarFromCoverage, manifestCoverage } from '../../../core/geo/coverage.ts';
import { greatCircleMeters } from '../../../core/geo/distance.ts';
import { locateRegion } from '../../../core/geo/locate.ts';
import type { Manifest } from '../../../core/geo/manifest.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { datasetPicker } from '../ui/dataset-picker.ts';
import { errorText, fmt, h, setStatus } from '../ui/dom.ts';
import { fitHeightToWindow } from '../ui/fit-height.ts';
import type { Geography } from './geography.ts';
import { heatColour, rampCss } from './heat-ramp.ts';
import { chooseProjection, type Projection } from './projection.ts';
import type { MapData } from './region-lists.ts';
import { regionBoxes, type RegionBox } from './region-shapes.ts';
import { veiledFacts } from './veiled-facts.ts';

/** Points per box edge: enough for curved edges in the azimuthal projection. */
const EDGE_STEPS = 12;

interface Picked {
  lat: number;
  lon: number;
  region: number;
  column: number;
  candidates: Array<{ index: number; distanceMeters: number }>;
  brute: { index: number; distanceMeters: number };
}

/** What the point panel says of every distance it shows. */
export const DISTANCE_NOTE = 'Distances are straight-line (great-circle) distances on the Earth, not by road or path.';

/**
 * The map: land, borders and a graticule under the admin's sites, the regions of the built
 * layout and a heat of candidate-list lengths, on a canvas; the pointer's coordinates below it.
 * Drag or arrow keys pan, the wheel or +/- zoom; a click (or Enter at the centre) shows that
 * point's region, candidates and nearest site, all worked out in the browser.
 */
export function mapScreen(ctx: ConsoleContext): Screen {
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const picker = datasetPicker(ctx, 'map-dataset', () => void load());
  const versionSelect = h('select', { id: 'map-version' }) as HTMLSelectElement;
  versionSelect.addEventListener('change', () => void loadVersion());
  const layer = (id: string, text: string, on = true) => {
    const box = h('input', { type: 'checkbox', id, checked: on }) as HTMLInputElement;
    box.addEventListener('change', () => draw());
    return { box, label: h('label', { for: id }, box, ' ' + text) };
  };
  const showLand = layer('map-land', 'land and borders');
  const showGraticule = layer('map-graticule', 'graticule');
  const showHeat = layer('map-heat', 'heat of list lengths');
  const showRegions = layer('map-regions', 'region outlines');
  const showSites = layer('map-sites', 'sites');
  const canvas = h('canvas', {
    class: 'map',
    tabindex: 0,
    role: 'img',
    'aria-label': 'Map of the sites and regions. Arrow keys pan, plus and minus zoom, Enter inspects the centre.',
  }) as HTMLCanvasElement;
  const legend = h('div', { class: 'legend' });
  const mapNote = h('div', { class: 'legend', id: 'map-note' });
  const pointer = h('div', { class: 'legend', id: 'map-pointer', 'aria-live': 'off' }, 'Pointer: move over the map to read its latitude and longitude');
  const facts = h('dl', { class: 'facts', id: 'map-facts' });
  const info = h('div', { id: 'map-info', 'aria-live': 'polite' }, h('p', { class: 'grid-note' }, 'Click the map to see the region, candidates and nearest site of a point.'));

  // Room under the map for the pointer's coordinates and the legend.
  const fitCanvas = fitHeightToWindow(canvas, 76, 280);
  let manifest: Manifest | null = null;
  let data: MapData | null = null;
  let projection: Projection | null = null;
  let boxes: RegionBox[] = [];
  let maxList = 1;
  let view = { scale: 1, x: 0, y: 0 }; // pixel = (projected - centre) * scale + canvas middle
  let picked: Picked | null = null;
  let worker: Worker | null = null;
  let geography: Geography | null = null;
  let projectionNote = '';
  // The geography module (d3-geo, topojson-client, the outlines) is a chunk of its own: only the map needs it.
  let geo: typeof import('./geography.ts') | null = null;

  const element = h(
    'section',
    { 'aria-label': 'Map' },
    h(
      'div',
      { class: 'toolbar' },
      picker.element,
      h('label', { for: 'map-version' }, 'Version ', versionSelect),
      h('span', { class: 'sep' }),
      showLand.label,
      showGraticule.label,
      showHeat.label,
      showRegions.label,
      showSites.label,
      h('span', { class: 'sep' }),
      h('button', { type: 'button', onclick: () => zoom(1.5) }, 'Zoom in'),
      h('button', { type: 'button', onclick: () => zoom(1 / 1.5) }, 'Zoom out'),
      h('button', { type: 'button', onclick: () => fit() }, 'Fit'),
    ),
    status,
    h(
      'div',
      { class: 'columns' },
      h('div', { class: 'map-wrap' }, canvas, pointer, legend, mapNote),
      h('div', { class: 'panel' }, h('h2', {}, 'This version'), facts, h('h2', { style: 'margin-top:10px' }, 'Point'), info),
    ),
  );

  async function load(): Promise<void> {
    const slug = ctx.dataset;
    if (!slug) return say('No dataset yet');
    try {
      const { versions, activeVersion } = await ctx.api.versions(slug);
      const built = versions.filter((v) => ['ready', 'active'].includes(v.state));
      versionSelect.replaceChildren(...built.map((v) => h('option', { value: String(v.version) }, `v${v.version}${v.version === activeVersion ? ' (active)' : ''}`)));
      if (built.length === 0) {
        versionSelect.append(h('option', { value: '' }, 'no built version'));
        return say(`${slug} has no built version yet: build one under Versions`);
      }
      versionSelect.value = String(activeVersion ?? built[0]!.version);
      await loadVersion();
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  // Each load takes a number; one overtaken by a later choice stops at its next step, so an
  // earlier, slower load can never end the later one's worker or overwrite what it shows.
  let loadSeq = 0;
  async function loadVersion(): Promise<void> {
    const slug = ctx.dataset;
    const version = Number(versionSelect.value);
    if (!slug || !version) return;
    const seq = ++loadSeq;
    say(`Loading v${version} and working out its candidate lists…`);
    picked = null;
    try {
      const [m, csv] = await Promise.all([ctx.api.manifest(slug, version), ctx.api.table(slug, version), showGeography()]);
      if (seq !== loadSeq) return;
      const computed = await computeInWorker(csv, m);
      if (seq !== loadSeq) return;
      manifest = m;
      data = computed;
      projection = chooseProjection(data.lats, data.lons);
      boxes = regionBoxes(m.layout);
      maxList = Math.max(1, ...data.lists.map((l) => l.length));
      const veiled = m.layout.kind === 'veiled';
      // A veiled layout's lists are private: there are no lengths to colour, only the coarse grid.
      showHeat.box.disabled = veiled;
      showHeat.label.title = veiled ? 'The lists of a veiled layout are fetched privately: there are no lengths to show' : '';
      legend.replaceChildren(
        ...(veiled
          ? ['Outlines: the public coarse grid (regions inside each cell are private)']
          : ['List length: 0', h('span', { class: 'ramp', style: `background: ${rampCss()}` }), `${maxList} (padded to ${m.record.slotsPerRegion})`]),
      );
      projectionNote = `Projection: ${projection.name} · Land and borders: Natural Earth 1:110m (public domain)`;
      renderFacts(m, data);
      fit();
      say(
        m.layout.kind === 'veiled'
          ? `v${version}: ${fmt.format(data.ids.length)} sites, veiled: ${fmt.format(m.layout.rows * m.layout.cols)} public coarse cell${m.layout.rows * m.layout.cols === 1 ? '' : 's'} over ${fmt.format(m.layout.regions)} private regions`
          : `v${version}: ${fmt.format(data.ids.length)} sites, ${fmt.format(data.lists.length)} regions, lists rebuilt in ${(data.ms / 1000).toFixed(1)} s`,
        'good',
      );
      info.replaceChildren(h('p', { class: 'grid-note' }, 'Click the map to see the region, candidates and nearest site of a point.'));
    } catch (err) {
      if (seq === loadSeq) say(`Map: ${errorText(err)}`, 'bad');
    }
  }

  function computeInWorker(csv: string, m: Manifest): Promise<MapData> {
    worker?.terminate();
    worker = new Worker(new URL('./region-worker.ts', import.meta.url), { type: 'module' });
    return new Promise((resolve, reject) => {
      worker!.onmessage = (e: MessageEvent<{ ok: true; data: MapData } | { ok: false; message: string }>) =>
        e.data.ok ? resolve(e.data.data) : reject(new Error(e.data.message));
      worker!.onerror = (e) => reject(new Error(e.message));
      worker!.postMessage({ csv, manifest: m });
    });
  }

  /** Land and borders, loaded once; the map works without them if they fail. */
  async function showGeography(): Promise<void> {
    try {
      geo ??= await import('./geography.ts');
      geography = await geo.loadGeography();
      draw();
    } catch (err) {
      showLand.box.disabled = true;
      showLand.label.title = `Land and borders could not be loaded: ${errorText(err)}`;
    }
  }

  function renderFacts(m: Manifest, d: MapData): void {
    if (m.layout.kind === 'veiled') {
      facts.replaceChildren(...veiledFacts(m).flatMap(([k, v]) => [h('dt', {}, k), h('dd', {}, v)]));
      return;
    }
    const lengths = d.lists.map((l) => l.length);
    const mean = lengths.reduce((a, b) => a + b, 0) / Math.max(1, lengths.length);
    const layout =
      m.layout.kind === 'grid'
        ? `uniform grid ${m.layout.rows} × ${m.layout.cols} + outside`
        : `adaptive, ${fmt.format(d.lists.length)} regions`;
    const pairs: Array<[string, string]> = [
      ['Layout', layout],
      ['Sites', fmt.format(d.ids.length)],
      ['Nearest sites served', `k = ${m.maxK ?? 1}`],
      ['Longest list', `${maxList} sites`],
      ['Mean list', `${mean.toFixed(1)} sites`],
      ['Matrix', `${fmt.format(m.matrix.rows)} × ${fmt.format(m.matrix.columns)} bits`],
    ];
    facts.replaceChildren(...pairs.flatMap(([k, v]) => [h('dt', {}, k), h('dd', {}, v)]));
  }

  function size(): { w: number; h: number; dpr: number } {
    const dpr = window.devicePixelRatio || 1;
    const w = canvas.clientWidth || 800;
    const hh = canvas.clientHeight || 560;
    if (canvas.width !== Math.round(w * dpr) || canvas.height !== Math.round(hh * dpr)) {
      canvas.width = Math.round(w * dpr);
      canvas.height = Math.round(hh * dpr);
    }
    return { w, h: hh, dpr };
  }

  function fit(): void {
    if (!data || !projection) return;
    let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
    for (let i = 0; i < data.lats.length; i++) {
      const [x, y] = projection.forward(data.lats[i]!, data.lons[i]!);
      x0 = Math.min(x0, x); x1 = Math.max(x1, x); y0 = Math.min(y0, y); y1 = Math.max(y1, y);
    }
    const { w, h: hh } = size();
    const spanX = Math.max(x1 - x0, 2000);
    const spanY = Math.max(y1 - y0, 2000);
    view = { scale: 0.9 * Math.min(w / spanX, hh / spanY), x: (x0 + x1) / 2, y: (y0 + y1) / 2 };
    draw();
  }

  const toPixel = (x: number, y: number, w: number, hh: number): [number, number] => [(x - view.x) * view.scale + w / 2, hh / 2 - (y - view.y) * view.scale];
  const fromPixel = (px: number, py: number, w: number, hh: number): [number, number] => [(px - w / 2) / view.scale + view.x, (hh / 2 - py) / view.scale + view.y];

  function boxPath(g: CanvasRenderingContext2D, b: RegionBox, w: number, hh: number): void {
    const p = projection!;
    // Keep each box whole on one side of the map's seam: shift it by whole turns toward the centre.
    const mid = p.unwrap((b.lonMin + b.lonMax) / 2, p.lon0);
    const shift = mid - (b.lonMin + b.lonMax) / 2;
    const ring: Array<[number, number]> = [];
    const latMin = Math.max(-89.999, b.latMin);
    const latMax = Math.min(89.999, b.latMax);
    for (let s = 0; s <= EDGE_STEPS; s++) ring.push([latMin, b.lonMin + ((b.lonMax - b.lonMin) * s) / EDGE_STEPS]);
    for (let s = 0; s <= EDGE_STEPS; s++) ring.push([latMin + ((latMax - latMin) * s) / EDGE_STEPS, b.lonMax]);
    for (let s = EDGE_STEPS; s >= 0; s--) ring.push([latMax, b.lonMin + ((b.lonMax - b.lonMin) * s) / EDGE_STEPS]);
    for (let s = EDGE_STEPS; s >= 0; s--) ring.push([latMin + ((latMax - latMin) * s) / EDGE_STEPS, b.lonMin]);
    g.beginPath();
    ring.forEach(([lat, lon], i) => {
      const [px, py] = toPixel(...p.forwardRaw(lat, lon + shift), w, hh);
      if (i === 0) g.moveTo(px, py);
      else g.lineTo(px, py);
    });
    g.closePath();
  }

  function draw(): void {
    const { w, h: hh, dpr } = size();
    const g = canvas.getContext('2d')!;
    g.setTransform(dpr, 0, 0, dpr, 0, 0);
    g.clearRect(0, 0, w, hh);
    if (projection && geo) {
      geo.drawGeography(g, projection, view, { w, h: hh }, { geography, land: showLand.box.checked, graticule: showGraticule.box.checked });
      // Says what is under the sites now: for people (the note) and for the browser test (the attribute).
      canvas.dataset.geography = geography && showLand.box.checked ? 'drawn' : 'off';
      mapNote.textContent = projectionNote + (showGraticule.box.checked ? ` · graticule every ${geo.graticuleStep(view.scale)}°` : '');
    }
    if (!data || !projection || !manifest) {
      g.fillStyle = '#5a6475';
      g.font = '14px system-ui, sans-serif';
      g.fillText('Choose a dataset with a built version.', 16, 28);
      return;
    }
    if (showHeat.box.checked && !showHeat.box.disabled) {
      for (const b of boxes) {
        boxPath(g, b, w, hh);
        g.fillStyle = heatColour((data.lists[b.region]?.length ?? 0) / maxList);
        g.fill();
      }
    }
    if (showRegions.box.checked) {
      g.strokeStyle = 'rgba(40, 52, 72, 0.45)';
      g.lineWidth = 0.7;
      for (const b of boxes) {
        boxPath(g, b, w, hh);
        g.stroke();
      }
    }
    if (picked) {
      const b = boxes.find((x) => x.region === picked!.region);
      if (b) {
        boxPath(g, b, w, hh);
        g.strokeStyle = '#1f5fbf';
        g.lineWidth = 2.5;
        g.stroke();
      }
    }
    if (showSites.box.checked) {
      g.fillStyle = '#1d2330';
      const r = view.scale * 300 > 2 ? 2.6 : 1.6;
      for (let i = 0; i < data.lats.length; i++) {
        const [px, py] = toPixel(...projection.forward(data.lats[i]!, data.lons[i]!), w, hh);
        if (px < -5 || py < -5 || px > w + 5 || py > hh + 5) continue;
        g.fillRect(px - r / 2, py - r / 2, r, r);
      }
    }
    if (picked) {
      const [px, py] = toPixel(...projection.forward(picked.lat, picked.lon), w, hh);
      for (const c of picked.candidates) {
        const [cx, cy] = toPixel(...projection.forward(data.lats[c.index]!, data.lons[c.index]!), w, hh);
        g.strokeStyle = c.index === picked.brute.index ? '#b3261e' : '#1f5fbf';
        g.lineWidth = c.index === picked.brute.index ? 2.5 : 1;
        g.beginPath();
        g.moveTo(px, py);
        g.lineTo(cx, cy);
        g.stroke();
      }
      g.fillStyle = '#b3261e';
      g.beginPath();
      g.arc(px, py, 5, 0, 2 * Math.PI);
      g.fill();
    }
    // Scale bar: metres per 100 px at the centre (true along the standard parallel or from the centre).
    const metres = 100 / view.scale;
    const nice = 10 ** Math.floor(Math.log10(metres));
    const bar = [1, 2, 5].map((k) => k * nice).filter((v) => v <= metres).pop() ?? nice;
    g.fillStyle = '#1d2330';
    g.fillRect(16, hh - 20, bar * view.scale, 3);
    g.font = '12px system-ui, sans-serif';
    g.fillText(bar >= 1000 ? `${bar / 1000} km` : `${bar} m`, 16, hh - 26);
  }

  /** The latitude and longitude under a canvas pixel, or null off the globe. */
  function pointAt(px: number, py: number): [number, number] | null {
    if (!projection) return null;
    const { w, h: hh } = size();
    return projection.inverse(...fromPixel(px, py, w, hh));
  }

  function showPointer(where: string, ll: [number, number] | null): void {
    pointer.textContent = ll ? `${where}: ${coordinates(ll[0], ll[1])}` : `${where}: off the globe`;
    if (ll) {
      pointer.dataset.lat = ll[0].toFixed(6);
      pointer.dataset.lon = ll[1].toFixed(6);
    } else {
      delete pointer.dataset.lat;
      delete pointer.dataset.lon;
    }
  }

  function inspect(px: number, py: number): void {
    if (!data || !projection || !manifest) return;
    const ll = pointAt(px, py);
    if (!ll) return say('That point is off the globe', 'bad');
    const [lat, lon] = ll;
    let brute = { index: 0, distanceMeters: Infinity };
    for (let i = 0; i < data.lats.length; i++) {
      const d = greatCircleMeters(lat, lon, data.qlats[i]!, data.qlons[i]!);
      if (d < brute.distanceMeters) brute = { index: i, distanceMeters: d };
    }
    const site = (i: number) => `${data!.ids[i]}${data!.names[i] ? ` (${data!.names[i]})` : ''}`;
    const far = isFarFromCoverage(manifestCoverage(manifest), lat, lon);
    const notes = [
      h('p', { class: 'grid-note', id: 'map-distance-note' }, DISTANCE_NOTE),
      far ? h('p', { class: 'status bad', id: 'map-far' }, 'This point is far outside the area the sites cover: the nearest listed site may be very far, and closer services the list does not hold may exist.') : '',
    ];
    if (manifest.layout.kind === 'veiled') {
      picked = null;
      info.replaceChildren(
        h(
          'dl',
          { class: 'facts' },
          h('dt', {}, 'Point'), h('dd', {}, `${lat.toFixed(5)}, ${lon.toFixed(5)}`),
          h('dt', {}, 'Nearest'), h('dd', { id: 'map-nearest' }, `${site(brute.index)}, ${distanceText(brute.distanceMeters)} (search of every site in your table)`),
        ),
        h('p', { class: 'grid-note' }, 'Veiled layout: an app finds this point\'s region inside its coarse cell with a private query, so the map cannot show the region or its candidates.'),
        ...notes,
      );
      draw();
      return;
    }
    const where = locateRegion(manifest, lat, lon);
    const list = Array.from(data.lists[where.region] ?? []);
    // What a client would decode: the candidates at their stored (quantised) coordinates.
    const candidates = nearestCandidates(list.map((index) => ({ index, lat: data!.qlats[index]!, lon: data!.qlons[index]! })), lat, lon, list.length || 1);
    picked = { lat, lon, region: where.region, column: where.column, candidates, brute };
    const nearest = candidates[0];
    const agree = nearest !== undefined && Math.abs(nearest.distanceMeters - brute.distanceMeters) < 1e-6;
    info.replaceChildren(
      h(
        'dl',
        { class: 'facts' },
        h('dt', {}, 'Point'), h('dd', {}, `${lat.toFixed(5)}, ${lon.toFixed(5)}`),
        h('dt', {}, 'Region'), h('dd', { id: 'map-region' }, `${where.region} (matrix column ${where.column})`),
        h('dt', {}, 'Candidates'), h('dd', {}, `${list.length} of ${manifest.record.slotsPerRegion} slots`),
        h('dt', {}, 'Nearest'), h('dd', { id: 'map-nearest' }, nearest ? `${site(nearest.index)}, ${distanceText(nearest.distanceMeters)}` : 'none'),
        h('dt', {}, 'Check'), h('dd', {}, agree ? 'equals a search of every site' : `differs: every-site search gives ${site(brute.index)}`),
      ),
      h('ol', { class: 'grid-note' }, ...candidates.slice(0, 12).map((c) => h('li', {}, `${site(c.index)} · ${distanceText(c.distanceMeters)}`))),
      candidates.length > 12 ? h('p', { class: 'grid-note' }, `… ${candidates.length - 12} more`) : '',
      ...notes,
    );
    draw();
  }

  function zoom(factor: number): void {
    view.scale *= factor;
    draw();
  }

  // Pointer: drag pans, a click without movement inspects.
  let drag: { x: number; y: number; vx: number; vy: number; moved: boolean } | null = null;
  canvas.addEventListener('pointerdown', (e) => {
    canvas.setPointerCapture(e.pointerId);
    drag = { x: e.offsetX, y: e.offsetY, vx: view.x, vy: view.y, moved: false };
  });
  canvas.addEventListener('pointermove', (e) => {
    if (!drag || !drag.moved) showPointer('Pointer', pointAt(e.offsetX, e.offsetY));
    if (!drag) return;
    const dx = e.offsetX - drag.x;
    const dy = e.offsetY - drag.y;
    if (Math.abs(dx) + Math.abs(dy) > 3) drag.moved = true;
    if (drag.moved) {
      view.x = drag.vx - dx / view.scale;
      view.y = drag.vy + dy / view.scale;
      draw();
    }
  });
  canvas.addEventListener('pointerup', (e) => {
    if (drag && !drag.moved) inspect(e.offsetX, e.offsetY);
    drag = null;
  });
  canvas.addEventListener('pointerleave', () => {
    if (projection) showPointer('Centre', pointAt(size().w / 2, size().h / 2));
  });
  canvas.addEventListener('wheel', (e) => {
    e.preventDefault();
    const { w, h: hh } = size();
    const before = fromPixel(e.offsetX, e.offsetY, w, hh);
    view.scale *= Math.exp(-e.deltaY * 0.0015);
    const after = fromPixel(e.offsetX, e.offsetY, w, hh);
    view.x += before[0] - after[0];
    view.y += before[1] - after[1];
    draw();
  }, { passive: false });
  canvas.addEventListener('keydown', (e) => {
    const step = 80 / view.scale;
    const keys: Record<string, () => void> = {
      ArrowLeft: () => (view.x -= step),
      ArrowRight: () => (view.x += step),
      ArrowUp: () => (view.y += step),
      ArrowDown: () => (view.y -= step),
      '+': () => (view.scale *= 1.5),
      '=': () => (view.scale *= 1.5),
      '-': () => (view.scale /= 1.5),
    };
    if (keys[e.key]) {
      e.preventDefault();
      keys[e.key]!();
      draw();
      showPointer('Centre', pointAt(size().w / 2, size().h / 2));
    } else if (e.key === 'Enter') {
      e.preventDefault();
      const { w, h: hh } = size();
      inspect(w / 2, hh / 2);
    }
  });
  new ResizeObserver(() => draw()).observe(canvas);

  return {
    element,
    show() {
      fitCanvas();
      // Again once the dataset list is in: a long dataset name can wrap the toolbar to another line.
      void picker.refresh().then(() => (fitCanvas(), load())).catch((err) => say(errorText(err), 'bad'));
    },
  };
}

/** Latitude and longitude in the site table's own form (signed decimal degrees), with the hemispheres spelt out. */
function coordinates(lat: number, lon: number): string {
  return `lat ${lat.toFixed(5)}, lon ${lon.toFixed(5)} (${Math.abs(lat).toFixed(3)}° ${lat >= 0 ? 'N' : 'S'}, ${Math.abs(lon).toFixed(3)}° ${lon >= 0 ? 'E' : 'W'})`;
}

/** A straight-line distance: metres up to 10 km, then km. */
function distanceText(metres: number): string {
  return metres < 10_000 ? `${fmt.format(Math.round(metres))} m` : `${fmt.format(Math.round(metres / 100) / 10)} km`;
}

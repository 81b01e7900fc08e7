import { geoAzimuthalEquidistant, geoGraticule, geoPath, geoProjection, type GeoPermissibleObjects, type GeoProjection } from 'd3-geo';
import type { Feature, FeatureCollection, Geometry, MultiLineString } from 'geojson';
import { feature, mesh } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import { EARTH_MEAN_RADIUS_M, RAD } from '../../../core/geo/distance.ts';
import type { Projection } from './projection.ts';

/**
 * Land and country borders under the sites, so a table with latitude and longitude swapped (its
 * sites in an ocean) looks wrong at a glance. The outlines are Natural Earth's 1:110m (public
 * domain) as the world-atlas package ships them in TopoJSON: 108 KB, bundled by vite into a chunk
 * of its own (with d3-geo and topojson-client: this module is imported only by the map, when it
 * is first shown), served by the console's own server: nothing from other hosts. 1:110m is coarse (coastlines a few km off): it shows where sites are, not which
 * street they are on.
 */
export interface Geography {
  land: FeatureCollection | Feature;
  /** Borders between countries only (coastlines are the land's outline). */
  borders: MultiLineString;
}


/** Colours of the base map: the sea is the canvas itself. */
export const GEOGRAPHY_COLOURS = { sea: '#dfe9f3', land: '#f6f3ea', coast: '#8fa3b8', border: '#b4a995', graticule: 'rgba(60, 80, 110, 0.22)' } as const;

let loading: Promise<Geography> | null = null;

/** The outlines, read once per page. */
export function loadGeography(): Promise<Geography> {
  loading ??= import('world-atlas/countries-110m.json').then((module) => {
    const world = (module.default ?? module) as unknown as Topology<{ countries: GeometryCollection; land: GeometryCollection }>;
    return {
      land: feature(world, world.objects.land) as FeatureCollection<Geometry> | Feature<Geometry>,
      borders: mesh(world, world.objects.countries, (a, b) => a !== b),
    };
  });
  loading.catch(() => (loading = null)); // a failed load may be tried again
  return loading;
}

export interface GeoView {
  /** Pixels per metre of projected distance. */
  scale: number;
  /** The projected point (metres) at the canvas middle. */
  x: number;
  y: number;
}

/**
 * The map's projection (projection.ts) in d3-geo, on the unit sphere: scaled by the Earth's radius
 * in metres times pixels per metre it draws where projection.forward puts points. d3 clips lines
 * at the seam (the antimeridian of the centre, or the azimuthal map's rim) and resamples curves.
 */
export function d3Projection(projection: Projection): GeoProjection {
  const { lat0, lon0 } = projection;
  if (projection.kind === 'azimuthal-equidistant') return geoAzimuthalEquidistant().rotate([-lon0, -lat0]);
  // x = (lon - lon0) cos(lat0), y = lat, in radians: projection.forward divided by the radius.
  const k = Math.cos(lat0 * RAD);
  const raw = Object.assign((lambda: number, phi: number): [number, number] => [lambda * k, phi], {
    invert: (x: number, y: number): [number, number] => [x / k, y],
  });
  return geoProjection(raw).rotate([-lon0, 0]);
}

/** Graticule spacing in degrees: lines at least ~90 px apart at the map's scale. */
export function graticuleStep(pixelsPerMetre: number): number {
  const degreesPer90px = 90 / (pixelsPerMetre * EARTH_MEAN_RADIUS_M * (Math.PI / 180));
  return GRATICULE_STEPS.find((s) => s >= degreesPer90px) ?? 30;
}

/** Paints the sea, then the graticule and/or the land and borders, in the map's projection and view. */
export function drawGeography(
  g: CanvasRenderingContext2D,
  projection: Projection,
  view: GeoView,
  size: { w: number; h: number },
  layers: { geography: Geography | null; land: boolean; graticule: boolean },
): void {
  g.fillStyle = GEOGRAPHY_COLOURS.sea;
  g.fillRect(0, 0, size.w, size.h);
  const d3 = d3Projection(projection)
    .scale(EARTH_MEAN_RADIUS_M * view.scale)
    .translate([size.w / 2 - view.x * view.scale, size.h / 2 + view.y * view.scale])
    .clipExtent([[-4, -4], [size.w + 4, size.h + 4]])
    .precision(0.4);
  const path = geoPath(d3, g);
  const stroke = (shape: GeoPermissibleObjects, colour: string, width: number) => {
    g.beginPath();
    path(shape);
    g.strokeStyle = colour;
    g.lineWidth = width;
    g.stroke();
  };
  if (layers.land && layers.geography) {
    g.beginPath();
    path(layers.geography.land);
    g.fillStyle = GEOGRAPHY_COLOURS.land;
    g.fill();
    g.strokeStyle = GEOGRAPHY_COLOURS.coast;
    g.lineWidth = 1;
    g.stroke();
    stroke(layers.geography.borders, GEOGRAPHY_COLOURS.border, 0.8);
  }
  if (layers.graticule) {
    // Only the lines in view: at 0.1 degree, the whole sphere is 5,400 lines of some 7,000 points
    // each, tens of seconds of drawing that froze the page when zoomed in.
    let step = graticuleStep(view.scale);
    let extent = visibleExtent(d3, size, step);
    while (lineCount(extent, step) > MAX_GRATICULE_LINES && step < 30) {
      step = GRATICULE_STEPS.find((s) => s > step) ?? 30;
      extent = visibleExtent(d3, size, step);
    }
    const lines = geoGraticule().extent(extent).step([step, step]).precision(Math.min(2.5, step / 4))();
    stroke(lines, GEOGRAPHY_COLOURS.graticule, 1);
  }
}

const GRATICULE_STEPS = [0.1, 0.2, 0.5, 1, 2, 5, 10, 15, 30];
/** More lines than this are never drawn (a pole in view at a high zoom widens the extent to every meridian). */
const MAX_GRATICULE_LINES = 400;
type Extent = [[number, number], [number, number]];
const lineCount = ([[w, s], [e, n]]: Extent, step: number) => (e - w) / step + (n - s) / step;

/**
 * The longitudes and latitudes in view, from a 9 x 9 grid of canvas points taken back to the
 * sphere, widened by one step and snapped to it; the whole sphere (poles included: d3's default
 * stops minor lines at 80 degrees) when a point is off the globe or the view spans over 180 degrees.
 */
function visibleExtent(d3: GeoProjection, size: { w: number; h: number }, step: number): Extent {
  const lons: number[] = [];
  const lats: number[] = [];
  for (let i = 0; i <= 8; i++) {
    for (let j = 0; j <= 8; j++) {
      const p = d3.invert?.([(size.w * i) / 8, (size.h * j) / 8]);
      if (!p || !Number.isFinite(p[0]) || !Number.isFinite(p[1])) return [[-180, -90], [180, 90]];
      lons.push(p[0]);
      lats.push(p[1]);
    }
  }
  const [west, east, south, north] = [Math.min(...lons), Math.max(...lons), Math.min(...lats), Math.max(...lats)];
  if (east - west > 180) return [[-180, -90], [180, 90]];
  return [
    [Math.max(-180, Math.floor(west / step) * step - step), Math.max(-90, Math.floor(south / step) * step - step)],
    [Math.min(180, Math.ceil(east / step) * step + step), Math.min(90, Math.ceil(north / step) * step + step)],
  ];
}

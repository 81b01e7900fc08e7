import { createRequire } from 'node:module';
import type { GeoPermissibleObjects } from 'd3-geo';
import { feature } from 'topojson-client';

type Topology = Parameters<typeof feature>[0];

/** Land of the world at 1:110 million scale (Natural Earth, public domain, via npm world-atlas), read once. */
let land: GeoPermissibleObjects | undefined;
export function worldLand(): GeoPermissibleObjects {
  if (!land) {
    const topology = createRequire(import.meta.url)('world-atlas/land-110m.json') as Topology;
    land = feature(topology, topology.objects.land! as Parameters<typeof feature>[1]) as GeoPermissibleObjects;
  }
  return land;
}

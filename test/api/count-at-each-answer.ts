import { worker } from './tenant-fixture.ts';

/**
 * A fetch for the SDK that reads a usage count once as each `/query` answer arrives, with no wait
 * and before the SDK decodes it: metering is awaited before an answer goes out, so the answer just
 * received must already be counted. `counted` holds the readings in order.
 */
export function countAtEachAnswer(read: () => Promise<number>): { fetch: (r: Request) => Promise<Response>; counted: number[] } {
  const counted: number[] = [];
  return {
    counted,
    fetch: async (r) => {
      const res = await worker(r);
      if (new URL(r.url).pathname.endsWith('/query')) counted.push(await read());
      return res;
    },
  };
}

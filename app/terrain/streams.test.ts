import { describe, expect, it } from "vitest";
import { flowAccumulation } from "./flow-accumulation";
import { D8_OUTLET, type GridSpec } from "./grid";
import { confluences, streamMask, strahlerOrder } from "./streams";
import { spec } from "./test-utils";

// Hand-made D8 network on a 5×5 grid (codes: 0 E, 1 SE, 2 S, 3 SW, 4 W, 5 NW, 6 N, 7 NE; 8 outlet):
//   row 0:  S  .  S  .  S         three sources at (0,0), (0,2), (0,4)
//   row 1:  SE .  S  .  SW        (0,0)→(1,0)→(2,1); (0,4)→(1,4)→(2,3)
//   row 2:  .  E  S  W  .         (2,1)→(2,2) ← (2,3); (0,2)→(1,2)→(2,2)
//   row 3:  .  .  S  .  .
//   row 4:  .  .  O  .  .         outlet (4,2)
const X = 255;
function network(): { s: GridSpec; dirs: Uint8Array; nodata: Uint8Array } {
  const s = spec(5, 5, 100, 100);
  // prettier-ignore
  const dirs = Uint8Array.from([
    2, X, 2, X, 2,
    1, X, 2, X, 3,
    X, 0, 2, 4, X,
    X, X, 2, X, X,
    X, X, D8_OUTLET, X, X,
  ]);
  const nodata = Uint8Array.from(dirs, (d) => (d === X ? 1 : 0));
  return { s, dirs, nodata };
}

describe("streams and Strahler order — Strahler (1957)", () => {
  it("thresholds contributing area in km² (the cell itself included)", () => {
    const { s, dirs, nodata } = network();
    const acc = flowAccumulation(s, dirs, nodata);
    // cell area 0.01 km²; (1,0) has 1 upstream cell → 0.02 km²
    const st = streamMask(s, acc.upstreamCells, 0.02);
    expect(st[0]).toBe(0);
    expect(st[5]).toBe(1);
    expect(st[22]).toBe(1);
    expect(() => streamMask(s, acc.upstreamCells, 0)).toThrow(/positive area/);
    const water = new Uint8Array(25);
    water[22] = 1;
    expect(streamMask(s, acc.upstreamCells, 0.02, water)[22]).toBe(0);
  });

  it("orders a network: 1 + 1 → 2, 2 + 2 → 3, 3 + 1 → 3 (formula, from the definition)", () => {
    const { s, dirs, nodata } = network();
    const acc = flowAccumulation(s, dirs, nodata);
    const st = streamMask(s, acc.upstreamCells, 0.01); // every cell is a stream
    const ord = strahlerOrder(s, dirs, st, acc.order, acc.validCount);
    expect(ord[0]).toBe(1);
    expect(ord[11]).toBe(1); // (2,1): one tributary of order 1 → stays 1
    expect(ord[12]).toBe(2); // (2,2): three order-1 tributaries meet → 2
    expect(ord[17]).toBe(2);
    expect(ord[22]).toBe(2);
    const conf = confluences(s, dirs, st);
    expect(Array.from(conf).reduce((a, b) => a + b, 0)).toBe(1);
    expect(conf[12]).toBe(1);
  });

  it("raises the order only where two streams of the highest order meet", () => {
    // binary tree: 4 sources → two order-2 streams → order 3 at their junction; an order-1 side stream
    // joining the order-3 stream leaves it at 3.
    const s = spec(7, 4, 100, 100);
    // prettier-ignore
    const dirs = Uint8Array.from([
      1, X, 3, X, 1, X, 3,
      X, 1, X, X, X, 3, X,
      X, X, 0, 2, 4, 4, X,
      X, X, X, D8_OUTLET, X, X, X,
    ]);
    // (2,2) → E → (2,3); (2,4) → W → (2,3); (2,5) → W → (2,4); (2,3) → S → the outlet (3,3)
    const nodata = Uint8Array.from(dirs, (d) => (d === X ? 1 : 0));
    const acc = flowAccumulation(s, dirs, nodata);
    const st = streamMask(s, acc.upstreamCells, 0.01);
    const ord = strahlerOrder(s, dirs, st, acc.order, acc.validCount);
    // left: (0,0)→(1,1)→(2,2) and (0,2)→(1,1): order 2 at (1,1)
    expect(ord[1 * 7 + 1]).toBe(2);
    expect(ord[2 * 7 + 2]).toBe(2);
    // right: (0,4) → SE and (0,6) → SW meet at (1,5): order 2, which drains SW to (2,4)
    expect(ord[1 * 7 + 5]).toBe(2);
    // (2,5) is a lone source (order 1) joining (2,4) together with the order-2 stream → stays 2
    expect(ord[2 * 7 + 4]).toBe(2);
    // (2,3): order 2 from the left + order 2 from the right → 3
    expect(ord[2 * 7 + 3]).toBe(3);
    expect(ord[3 * 7 + 3]).toBe(3);
  });
});

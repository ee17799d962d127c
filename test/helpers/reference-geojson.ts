/**
 * longitudeExtent of src/output/geojson.ts in its former form (always sorted),
 * kept verbatim as the reference for the test of the current form (test/output/geojson.test.ts).
 * RFC 7946 §5.2 (Butler et al., 2016).
 */
export function refLongitudeExtent(lons: ArrayLike<number>): [number, number] | null {
  const all = new Float64Array(lons.length);
  let n = 0;
  for (let i = 0; i < lons.length; i++) {
    const v = lons[i]!;
    if (Number.isFinite(v)) all[n++] = v;
  }
  if (n === 0) return null;
  const a = all.subarray(0, n).sort();
  // the gap across the antimeridian, from the easternmost round to the westernmost
  let gap = a[0]! + 360 - a[a.length - 1]!;
  let west = a[0]!, east = a[a.length - 1]!;
  for (let i = 1; i < a.length; i++) {
    const g = a[i]! - a[i - 1]!;
    if (g > gap) {
      gap = g;
      west = a[i]!;
      east = a[i - 1]!;
    }
  }
  return [west, east];
}

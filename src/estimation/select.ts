/**
 * Order statistics without a full sort: the k-th smallest element (0-based) of a Float64Array, in
 * place, in O(n) expected time (Hoare's FIND / quickselect with a median-of-three pivot; a range that
 * stops shrinking falls back to the typed-array sort, so the worst case stays O(n log n)).
 * The value is the one of `a.sort()[k]` bit for bit, in the typed-array sort's order: numbers
 * ascending, −0 before +0, NaN last (test/estimation/select.test.ts).
 * Source: Hoare, "Algorithm 65: FIND", CACM 4(7):321 (1961); the median-of-three pivot: Sedgewick,
 * "Implementing Quicksort programs", CACM 21(10):847–857 (1978).
 * On return a[lo..hi) is permuted (a[k] holds the result up to the sign of a zero); for a second
 * order statistic of the same values call it again on the whole range (a sub-range of the permuted
 * array can hold +0 where the sorted one holds −0).
 */

/** The k-th smallest of a[lo..hi) (0-based within the whole array: lo ≤ k < hi), as a.subarray(lo, hi).sort()[k − lo]. */
export function selectKth(a: Float64Array, k: number, lo = 0, hi = a.length): number {
  if (!(k >= lo && k < hi)) throw new RangeError(`selectKth: k ${k} outside [${lo}, ${hi})`);
  // NaN go last (as in the typed-array sort): move them to the end of the range
  let end = hi;
  for (let i = lo; i < end; i++)
    if (a[i] !== a[i]) {
      end--;
      const t = a[i]!;
      a[i] = a[end]!;
      a[end] = t;
      i--;
    }
  if (k >= end) return NaN;
  let l = lo, r = end - 1;
  // a range that does not halve within ~2 log2 n rounds is sorted instead (bounded worst case)
  let budget = 2 * Math.ceil(Math.log2(end - lo + 1)) + 8;
  while (r > l) {
    if (budget-- <= 0 || r - l < 16) {
      a.subarray(l, r + 1).sort();
      break;
    }
    // median of three as the pivot value
    const m = (l + r) >> 1;
    let x = a[l]!, y = a[m]!, z = a[r]!;
    if (x > y) { const t = x; x = y; y = t; }
    if (y > z) { y = z; }
    if (x > y) { y = x; }
    const pivot = y;
    // Hoare partition: a[l..j] ≤ pivot ≤ a[i..r]
    let i = l, j = r;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) {
        const t = a[i]!;
        a[i] = a[j]!;
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) r = j;
    else if (k >= i) l = i;
    else break; // j < k < i: a[k] equals the pivot
  }
  const v = a[k]!;
  if (v !== 0) return v;
  // zeros compare equal above; the sorted order puts −0 first: the k-th is −0 iff more than k − lo
  // elements of the range are negative or −0
  let below = 0;
  for (let i = lo; i < end; i++) if (a[i]! < 0 || Object.is(a[i], -0)) below++;
  return below > k - lo ? -0 : 0;
}


// Row orderings shared by the model builder (models/lsq.ts) and cross-validation (stats/crossval.ts); it sits in
// data/, below both, so that models/ never imports stats/.

/**
 * Row indices in ascending order of x, ties by row order: a stable bottom-up merge sort on an index array (no
 * comparator callbacks; O(n) when x is already sorted), common practice.
 */
export function sortedOrder(x: ArrayLike<number>): Int32Array {
  const n = x.length;
  let a = new Int32Array(n);
  for (let i = 0; i < n; i++) a[i] = i;
  let sorted = true;
  for (let i = 1; i < n && sorted; i++) if (x[i] < x[i - 1]) sorted = false;
  if (sorted) return a;
  // the keys travel with the indices, so the merge reads memory in order
  let b = new Int32Array(n);
  let ka = Float64Array.from(x);
  let kb = new Float64Array(n);
  // runs of RUN by insertion sort (stable), then merges of doubling width
  const RUN = 32;
  for (let lo = 0; lo < n; lo += RUN) {
    const hi = Math.min(lo + RUN, n);
    for (let i = lo + 1; i < hi; i++) {
      const key = ka[i];
      const idx = a[i];
      let j = i - 1;
      while (j >= lo && ka[j] > key) {
        ka[j + 1] = ka[j];
        a[j + 1] = a[j];
        j--;
      }
      ka[j + 1] = key;
      a[j + 1] = idx;
    }
  }
  for (let width = RUN; width < n; width *= 2) {
    for (let lo = 0; lo < n; lo += 2 * width) {
      const mid = Math.min(lo + width, n);
      const hi = Math.min(lo + 2 * width, n);
      let i = lo;
      let j = mid;
      let k = lo;
      // take from the left run unless the right key is strictly smaller (stability: ties keep row order)
      while (i < mid && j < hi) {
        if (ka[j] < ka[i]) {
          kb[k] = ka[j];
          b[k++] = a[j++];
        } else {
          kb[k] = ka[i];
          b[k++] = a[i++];
        }
      }
      while (i < mid) {
        kb[k] = ka[i];
        b[k++] = a[i++];
      }
      while (j < hi) {
        kb[k] = ka[j];
        b[k++] = a[j++];
      }
    }
    [a, b] = [b, a];
    [ka, kb] = [kb, ka];
  }
  return a;
}

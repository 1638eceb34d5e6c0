/** Reusable work arrays for temporaries that no caller keeps (DEVELOPERS.md, "Speed: small arrays"). */

/** A reusable work array of at least n entries (every entry is written before it is read). */
export function workArray<T extends Float64Array | Uint8Array | Int32Array>(make: (n: number) => T): (n: number) => T {
  let buf = make(0);
  return (n) => {
    if (buf.length < n) buf = make(2 * n);
    return buf;
  };
}

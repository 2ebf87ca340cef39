/**
 * A WebAssembly module compiled from its bytes as base64 (the generated *Module.ts files), or
 * null where it cannot run: no WebAssembly, a feature the runtime lacks (the weighted-Gram
 * module's SIMD), or compilation refused (a content security policy). Each caller then takes its
 * plain JavaScript path, which gives the same values to the bit.
 *
 * Compiled synchronously: each module is a few kilobytes, below the size browsers allow that
 * for on their main thread (4 KB in Chromium, from memory).
 */
export function compileModule(base64: string): WebAssembly.Module | null {
  try {
    const text = atob(base64);
    const bytes = new Uint8Array(text.length);
    for (let t = 0; t < text.length; t++) bytes[t] = text.charCodeAt(t);
    return new WebAssembly.Module(bytes);
  } catch {
    return null;
  }
}

/** A new instance of `module` (no imports), or null where it cannot be made. */
export function instantiate(module: WebAssembly.Module | null): WebAssembly.Instance | null {
  if (!module) return null;
  try {
    return new WebAssembly.Instance(module, {});
  } catch {
    return null;
  }
}

/** Makes `memory` at least `bytes` long; true when it grew (views made before are then void). */
export function growTo(memory: WebAssembly.Memory, bytes: number): boolean {
  if (memory.buffer.byteLength >= bytes) return false;
  memory.grow(Math.ceil((bytes - memory.buffer.byteLength) / 65536));
  return true;
}

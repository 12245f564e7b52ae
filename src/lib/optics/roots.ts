/**
 * Output layout of the imaging kernels (`imaging.ts` for one element, `pair-kernel.ts`
 * for two): each root is ROOT_STRIDE numbers in a caller-owned Float64Array, and its
 * flags say what kind of root it is.
 *
 * Geometry, all in air, distances in mm along +z from the object plane:
 *   object plane → s → element 1 (thickness t₁) → gap g → element 2 (t₂) → d → target
 * with s + t₁ + g + t₂ + d = L. s is the object (working) distance, g the vertex gap,
 * d the back (working) distance. For one element there is no g.
 */
/** Numbers per root in a kernel's output buffer. */
export const ROOT_STRIDE = 6;
/** Offset of the object distance s (object plane to first vertex), mm. */
export const ROOT_OBJECT_DISTANCE = 0;
/** Offset of the vertex gap g between the two elements, mm (0 for a single element). */
export const ROOT_GAP = 1;
/** Offset of the back distance d (last vertex to target plane), mm. */
export const ROOT_BACK_DISTANCE = 2;
/** Offset of the magnification achieved, from the full matrix. */
export const ROOT_MAGNIFICATION = 3;
/** Offset of the root's flags (a sum of ROOT_* bits, stored as a number). */
export const ROOT_FLAGS = 4;
/** Offset of |B| of the full object-to-target matrix, mm (0 for an exact image). */
export const ROOT_RESIDUAL = 5;

/** Two roots merged into one (the gap equation touches zero; happens at m = ±1). */
export const ROOT_DOUBLE = 1;
/**
 * The configuration is afocal (system C = 0) and images at every object distance with
 * s + d fixed: a one-parameter family. The root written is its symmetric member s = d.
 */
export const ROOT_FAMILY = 2;
/** s < 0: the object would have to sit behind the first vertex (virtual object). */
export const ROOT_VIRTUAL_OBJECT = 4;
/** g < 0: the elements would overlap. */
export const ROOT_NEGATIVE_GAP = 8;
/** d < 0: the image forms before the last vertex (virtual image). */
export const ROOT_NEGATIVE_BACK = 16;
/** The full matrix check failed (|B| or A − m above tolerance); do not use the root. */
export const ROOT_UNVERIFIED = 32;

/** Bits that make a root non-physical before any aperture or gap limit is applied. */
export const ROOT_NON_PHYSICAL = ROOT_VIRTUAL_OBJECT | ROOT_NEGATIVE_GAP | ROOT_NEGATIVE_BACK | ROOT_UNVERIFIED;

/**
 * Glasscrib optics core: thick elements, ray transfer matrices, homogeneous points,
 * imaging solver kernels, real rays, Gaussian beams (q parameter, M², coupling, fibre
 * modes) and the beam solvers' closed forms. Pure TypeScript with no framework, database, DOM or
 * Node-only imports, so it runs in the server, in a worker_thread and in the browser.
 *
 * Conventions (kept exactly everywhere in this module; see also DESIGN.md):
 * - Units: lengths in millimetres, wavelengths in nanometres, angles in radians. Names
 *   carry the unit (eflMm, wavelengthNm); powers and curvatures are in 1/mm.
 * - Light travels left to right, towards +z. Positions along the axis grow with z; the
 *   object plane of a layout is z = 0.
 * - Radius sign: positive when the centre of curvature lies to the right (+z) of the
 *   vertex; a flat surface has radius null (curvature 0).
 * - Surfaces of a part are listed in catalogue orientation; `thicknessMm` and
 *   `material` of a surface describe the medium after it (null material = air), the
 *   last surface has neither. A reversed part has its surfaces in the opposite order
 *   with radii negated (`reverseSurfaces`).
 * - Ray vector (y, n·u): height in mm and reduced angle (index times paraxial angle).
 *   Translation [[1, t/n], [0, 1]] and refraction [[1, 0], [−(n' − n)/R, 1]] are in
 *   reduced form, so every matrix has determinant 1.
 * - A system matrix is the product right to left in the order light meets the
 *   elements: M = Mₖ···M₂·M₁. Plane-to-plane M = [[A, B], [C, D]] images when B = 0,
 *   with magnification A.
 * - Magnification is signed: negative means an inverted real image.
 * - Homogeneous points of the meridional plane are (w, z, y), the Cartesian point
 *   being (z/w, y/w); the 3x3 point transfer matrix maps object points to image points.
 * - Objects and images are in air (n = 1), and all indices are relative to air.
 * - Expected failures are typed results (`Result`, `PlacementResult`) or null, never
 *   NaN; `OpticsError` subclasses carry a stable `code`.
 * - Hot paths (kernels, trace) write into caller-owned Float64Arrays and allocate
 *   nothing per candidate.
 */
export * from './errors';
export * from './matrix';
export * from './materials';
export * from './cardinal';
export * from './sag';
export * from './element';
export * from './black-box';
export * from './system';
export * from './homogeneous';
export * from './snapshot';
export * from './imaging';
export * from './physical';
export * from './placement';
export * from './raytrace';
export * from './spot';
export * from './field-spot';
export * from './colour';
export * from './gaussian';
export * from './coupling';
export * from './fibre';
export * from './polynomial';
export * from './beam-match';
export * from './afocal';

/**
 * The real-ray figures of 1,500 random two-lens systems as one JSON line (a helper for work on the
 * ray trace, not run by `npm run bench`): run it in two checkouts and compare the outputs byte for
 * byte to show that a change leaves every figure the same (axial cone and stop, axial RMS, field
 * edge's spot, loss and pupil, with and without the early stop, and the square grid's spot). H sets
 * the largest field height (default 5 mm, 25 reaches blocked edges), STOP the early stop's radius
 * (default 0.001 mm).
 * Invented lenses from a seeded generator; no catalogue data.
 */
import { buildElement, traceSystemFromLayout, axialCone, axialSpot, fieldGridSpot, layoutMatrix, imageAfter, create } from '../../src/lib/optics';
import { edgeTrace } from '../../src/lib/solver/search/field-edge';
import { mulberry32 } from '../../src/lib/prng';
const r = mulberry32(11);
const out: unknown[] = [];
let made = 0;
while (made < 1500) {
	const f = () => (r() < 0.5 ? 1 : -1) * (15 + 200 * r());
	const lens = (ca: number) => buildElement([{ radiusMm: f(), thicknessMm: 2 + 5 * r(), material: '517642' }, { radiusMm: r() < 0.3 ? null : f() }], 587.6, { clearApertureMm: ca, reversed: false });
	const a = lens(6 + 20 * r()),
		b = lens(6 + 20 * r());
	if (!a.ok || !b.ok) continue;
	const base = { objectDistanceMm: 20 + 150 * r(), elements: [a.value, b.value], gapsMm: [1 + 40 * r()], backDistanceMm: 0 };
	const img = imageAfter(layoutMatrix(create(), base));
	if (!img || !(img.imageDistanceMm > 1)) continue;
	const sys = traceSystemFromLayout({ ...base, backDistanceMm: img.imageDistanceMm });
	if (!sys.ok) continue;
	made++;
	const na = 0.02 + 0.2 * r(),
		h = 0.5 + Number(process.env.H ?? 5) * r();
	const cone = axialCone(sys.value, na);
	const spot = axialSpot(sys.value, { na: cone.passedSine > 0 ? cone.passedSine : na, rays: 32 });
	const edge = edgeTrace(sys.value, h, na, cone.stopSurface);
	const early = edgeTrace(sys.value, h, na, cone.stopSurface, Number(process.env.STOP ?? 0.001));
	const grid = fieldGridSpot(sys.value, h, { sinChief: edge.sinChief, radiusSine: na, grid: 12 });
	out.push([cone, spot?.rmsAboutCentroidMm ?? null, edge.rmsMm, edge.lostFraction, edge.centroidMm, edge.pupil, early.rmsMm, early.complete, grid]);
}
console.log(JSON.stringify(out));

import { AdiStepper } from '../packages/solver2d/src/adi.ts';
import { buildMask } from '../packages/solver2d/src/mask.ts';
import { buildMesh, uniformAxis } from '../packages/solver2d/src/mesh.ts';
for (const [nx, nz] of [[200, 100], [400, 200], [800, 400]]) {
  const mesh = buildMesh(uniformAxis(nx / 10, nx), uniformAxis(nz / 10, nz - 1));
  const mask = buildMask(mesh, [[nx / 40, nx / 20]]);
  const st = new AdiStepper(mesh, mask);
  const c = new Float64Array(nx * nz);
  st.holdSurface(c, 1);
  for (let k = 0; k < 20; k++) st.step(c, 0.01, 'peaceman-rachford', true, 1);
  const n = 200;
  const t0 = performance.now();
  for (let k = 0; k < n; k++) st.step(c, 0.01 * (1 + k / n), 'peaceman-rachford', true, 1);
  const t1 = performance.now();
  for (let k = 0; k < n; k++) st.step(c, 0.01 * (1 + k / n), 'peaceman-rachford', false, 0);
  const t2 = performance.now();
  console.log(nx, nz, 'held', ((t1 - t0) * 1e6 / (n * nx * nz)).toFixed(2), 'ns/pt', 'sealed', ((t2 - t1) * 1e6 / (n * nx * nz)).toFixed(2));
}

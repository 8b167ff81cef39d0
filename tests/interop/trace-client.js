// Interop check from outside .NET: loads the contracts from protos/ at run time, traces the symmetric two-bar truss
// through both limit points and checks what streams back. The load comes through a load set and a combination, and
// the last point's reactions are checked, so the v1 field names (load_sets, load_set, behavior, reaction_y) are used
// from outside .NET: protobuf.js drops unknown names silently, so a wrong name would lose the load or the reactions.
// Usage: node trace-client.js HOST:PORT
'use strict';
const path = require('path');
const grpc = require('@grpc/grpc-js');
const protoLoader = require('@grpc/proto-loader');

const target = process.argv[2] || '127.0.0.1:5180';
const protoRoot = path.resolve(__dirname, '..', '..', 'protos');
const def = protoLoader.loadSync('pathservice/v1/service.proto', {
  includeDirs: [protoRoot], keepCase: false, longs: String, enums: String, defaults: true, oneofs: true,
});
const { StructuralPathService } = grpc.loadPackageDefinition(def).pathservice.v1;
const client = new StructuralPathService(target, grpc.credentials.createInsecure());

const pin = (node) => ['DIRECTION_X', 'DIRECTION_Y', 'DIRECTION_Z'].map((direction) => ({ node, direction }));
const apexY = { node: 'apex', direction: 'DIRECTION_Y' };
const request = {
  model: {
    name: 'interop two-bar truss',
    units: { force: 'kN', length: 'm' },
    nodes: [{ id: 'left', x: -4, y: 0, z: 0 }, { id: 'apex', x: 0, y: 0.35, z: 0 }, { id: 'right', x: 4, y: 0, z: 0 }],
    bars: [
      { id: 'bar-L', startNode: 'left', endNode: 'apex', elasticModulus: 2e8, area: 1.2e-3, behavior: 'BAR_BEHAVIOR_TENSION_AND_COMPRESSION' },
      { id: 'bar-R', startNode: 'apex', endNode: 'right', elasticModulus: 2e8, area: 1.2e-3 },
    ],
    supports: [...pin('left'), ...pin('right'), { node: 'apex', direction: 'DIRECTION_X' }, { node: 'apex', direction: 'DIRECTION_Z' }],
  },
  loadCase: {
    loadSets: [{ name: 'apex load', loads: [{ node: 'apex', fy: -10 }] }],
    combination: { name: 'interop', reference: [{ loadSet: 'apex load', factor: 1 }] },
  },
  controls: {
    method: 'CONTINUATION_METHOD_ARC_LENGTH', initialLoadIncrement: 0.5, maxPoints: 400,
    targetDisplacementDof: apexY, targetDisplacement: -0.8, monitored: [apexY],
  },
};

const LIMIT = 6.1180766;
const results = [];
const check = (name, ok, detail) => { results.push(ok); console.log(`${ok ? 'ok' : 'not ok'} - ${name}${detail ? ` (${detail})` : ''}`); };

const updates = [];
const call = client.tracePath(request, { deadline: Date.now() + 60_000 });
call.on('data', (u) => updates.push(u));
call.on('error', (err) => { console.error(`TracePath failed: ${err.code} ${err.details}`); console.log('0 passed, 1 failed'); process.exit(1); });
call.on('end', () => {
  const points = updates.filter((u) => u.update === 'point').map((u) => u.point);
  const criticals = updates.filter((u) => u.update === 'criticalPoint').map((u) => u.criticalPoint);
  const last = updates[updates.length - 1];
  check('points stream back', points.length > 10, `${points.length} points`);
  check('points carry the monitored node id', points.every((p) => p.monitored[0] && p.monitored[0].node === 'apex'));
  check('two limit points', criticals.length === 2 && criticals.every((c) => c.kind === 'CRITICAL_POINT_KIND_LIMIT_POINT'),
    criticals.map((c) => `${c.kind} λ=${c.loadFactor}`).join(', '));
  check('upper limit point near +6.118', criticals.length > 0 && Math.abs(criticals[0].loadFactor - LIMIT) < 1e-4);
  check('lower limit point near -6.118', criticals.length > 1 && Math.abs(criticals[1].loadFactor + LIMIT) < 1e-4);
  check('summary last', last && last.update === 'summary' && last.summary.reason === 'STOP_REASON_TARGET_DISPLACEMENT_REACHED',
    last && last.summary ? `${last.summary.reason}, ${last.summary.points} points` : 'no summary');
  const end = points[points.length - 1];
  const reactionY = end && end.state ? end.state.nodes.reduce((sum, n) => sum + n.reactionY, 0) : NaN;
  // Equilibrium in y at the last point: the supports carry λ·10 kN (λ·F_ref with F_ref = −10 kN at the apex).
  check('last point reactions balance the load', end && Math.abs(reactionY - 10 * end.loadFactor) < 1e-6 * Math.max(1, Math.abs(10 * end.loadFactor)),
    end ? `Σ reaction_y = ${reactionY}, λ·10 = ${10 * end.loadFactor}` : 'no point');
  check('summary echoes units', last && last.summary && last.summary.units.force === 'kN' && last.summary.units.length === 'm');
  const passed = results.filter(Boolean).length;
  console.log(`${passed} passed, ${results.length - passed} failed`);
  process.exit(passed === results.length ? 0 : 1);
});

// Waits until the server's gRPC health service answers SERVING for the analysis service, or gives up.
// Usage: node wait-health.js HOST:PORT [SECONDS]
'use strict';
const path = require('path');
const grpc = require('@grpc/grpc-js');
const protoLoader = require('@grpc/proto-loader');

const [target, seconds = '60'] = process.argv.slice(2);
const def = protoLoader.loadSync(path.join(__dirname, 'health.proto'), { enums: String });
const { Health } = grpc.loadPackageDefinition(def).grpc.health.v1;
const client = new Health(target, grpc.credentials.createInsecure());
const until = Date.now() + Number(seconds) * 1000;

function attempt() {
  client.check({ service: 'pathservice.v1.StructuralPathService' }, { deadline: Date.now() + 1000 }, (err, reply) => {
    if (!err && reply.status === 'SERVING') { console.log(`server at ${target} is SERVING`); process.exit(0); }
    if (Date.now() > until) { console.error(`server at ${target} not healthy: ${err ? err.message : reply.status}`); process.exit(1); }
    setTimeout(attempt, 250);
  });
}
attempt();

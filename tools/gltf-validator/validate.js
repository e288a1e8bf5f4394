// Runs the Khronos glTF validator on one .glb or .gltf file (external
// resources such as the .bin are read from beside it) and prints the report
// as JSON on standard output. Used by the tests of internal/exchange/gltf.
'use strict';
const fs = require('fs');
const path = require('path');
const validator = require('gltf-validator');

const file = process.argv[2];
const data = new Uint8Array(fs.readFileSync(file));
validator.validateBytes(data, {
  uri: path.basename(file),
  maxIssues: 100,
  externalResourceFunction: (uri) => new Promise((resolve, reject) => {
    fs.readFile(path.join(path.dirname(file), decodeURIComponent(uri)), (err, buf) => {
      if (err) { reject(err.toString()); return; }
      resolve(new Uint8Array(buf));
    });
  }),
}).then((report) => {
  process.stdout.write(JSON.stringify(report));
}, (err) => {
  process.stderr.write(String(err) + '\n');
  process.exit(2);
});

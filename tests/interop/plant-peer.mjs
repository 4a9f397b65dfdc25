// Simulated plant served by node-opcua: the independent OPC UA server that Tieflow's client is tested against.
//
//   node plant-peer.mjs --port N [--tick ms] [--tags N] [--pki DIR] [--down ms] [--stdin-eof-exit] [--secure]
//                       [--user NAME] (password from TIEFLOW_PEER_PASSWORD)
//
// With --secure the server offers None plus Sign and SignAndEncrypt under Basic256Sha256, Aes128_Sha256_RsaOaep and
// Aes256_Sha256_RsaPss, and accepts every client certificate; with --user it accepts that user name and password.
//
// Prints "READY opc.tcp://127.0.0.1:<port>/sim" on stdout once it listens (node-opcua's own diagnostics also go to
// stdout; our lines start with READY, OK, ERR or "{").
// Address space (namespace urn:example:plant-sim):
//   Objects/Plant (folder)
//     Unit1 (object): Flow (sine, Good), Temperature (source time lags 250 ms), Ramp (+0.1 per tick),
//                     Quality (value +0.5 per tick, status cycles Good -> Uncertain_LastUsableValue -> Bad_SensorFailure
//                     every 5 s), Constant (never changes), Level (AnalogItem, EURange 0..100, triangle wave)
//     Tags (folder): Tag000 .. Tag<N-1> (Doubles, so that Browse needs continuation points and a Read of all of them
//                    needs several chunks with an 8192-byte buffer)
// stdin, one command a line (answers OK ... or ERR ...):
//   pause | resume                       stop/start the timer that changes the values
//   set <Name> <value> [Status] [ISO]    e.g. "set Flow 12.5 BadSensorFailure 2030-01-01T00:00:00Z"
//   restart                              same as SIGUSR2
// Signals: SIGTERM/SIGINT clean shutdown (exit 0); SIGUSR2 restarts the server in process on the same port (all
// sessions lost); SIGSTOP/SIGCONT (sent by the test) freeze it without closing the sockets.
// With --stdin-eof-exit, closing stdin stops the server cleanly (what the .NET test fixture uses).
import { OPCUAServer } from "node-opcua-server";
import { OPCUACertificateManager } from "node-opcua-certificate-manager";
import { StatusCodes } from "node-opcua-client";
import { Variant, DataType } from "node-opcua-variant";
import os from "node:os";
import path from "node:path";
import readline from "node:readline";

function parseArgs(argv) {
  const opts = { port: 0, tick: 200, tags: 300, pki: null, down: 500, stdinEofExit: false, secure: false, user: null };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const next = () => {
      if (i + 1 >= argv.length) { fail(`option ${a} needs a value`); }
      return argv[++i];
    };
    switch (a) {
      case "--port": opts.port = Number(next()); break;
      case "--tick": opts.tick = Number(next()); break;
      case "--tags": opts.tags = Number(next()); break;
      case "--pki": opts.pki = next(); break;
      case "--down": opts.down = Number(next()); break;
      case "--stdin-eof-exit": opts.stdinEofExit = true; break;
      case "--secure": opts.secure = true; break;
      case "--user": opts.user = next(); break;
      default: fail(`unknown option ${a}`);
    }
  }
  if (!Number.isInteger(opts.port) || opts.port < 0 || opts.port > 65535) { fail("--port must be 0..65535"); }
  if (!(opts.tick >= 10)) { fail("--tick must be at least 10 ms"); }
  opts.pki ??= path.join(os.tmpdir(), `tieflow-peer-pki-${process.pid}`);
  return opts;
}

function fail(message) {
  console.log(`ERR ${message}`);
  process.exit(2);
}

const opts = parseArgs(process.argv.slice(2));
const qualityCycle = [StatusCodes.Good, StatusCodes.UncertainLastUsableValue, StatusCodes.BadSensorFailure];

let server = null;
let timer = null;
let paused = false;
let tickCount = 0;
let boundPort = opts.port;
const nodes = new Map();   // name -> UAVariable
const state = { flow: 0, ramp: 0, quality: 0, level: 0, levelStep: 2.5 };

function dbl(value) { return new Variant({ dataType: DataType.Double, value }); }

function setNode(name, value, status = StatusCodes.Good, sourceTime = new Date()) {
  const node = nodes.get(name);
  node.setValueFromSource(dbl(value), status, sourceTime);
}

function tick() {
  if (paused) { return; }
  tickCount++;
  const now = new Date();
  setNode("Flow", 50 + 10 * Math.sin(tickCount / 10), StatusCodes.Good, now);
  setNode("Temperature", 298.15 + Math.cos(tickCount / 20), StatusCodes.Good, new Date(now.getTime() - 250));
  state.ramp = Math.round((state.ramp + 0.1) * 10) / 10;
  setNode("Ramp", state.ramp, StatusCodes.Good, now);
  state.quality += 0.5;
  const phase = Math.floor(now.getTime() / 5000) % qualityCycle.length;
  setNode("Quality", state.quality, qualityCycle[phase], now);
  state.level += state.levelStep;
  if (state.level >= 100 || state.level <= 0) { state.levelStep = -state.levelStep; }
  setNode("Level", state.level, StatusCodes.Good, now);
  for (let i = 0; i < opts.tags; i++) {
    setNode(tagName(i), i + tickCount / 100, StatusCodes.Good, now);
  }
}

function tagName(i) { return `Tag${String(i).padStart(3, "0")}`; }

async function start() {
  const certificateManager = new OPCUACertificateManager({
    rootFolder: opts.pki,
    automaticallyAcceptUnknownCertificate: true,
  });
  server = new OPCUAServer({
    port: boundPort,
    host: "127.0.0.1",
    hostname: "127.0.0.1",
    alternateHostname: ["localhost"],
    resourcePath: "/sim",
    serverCertificateManager: certificateManager,
    buildInfo: { productName: "tieflow-interop-peer", buildNumber: "1" },
    serverInfo: { applicationUri: "urn:example:plant-sim-peer" },
    securityModes: opts.secure ? [1, 2, 3] : [1],
    securityPolicies: opts.secure
      ? ["http://opcfoundation.org/UA/SecurityPolicy#None", "http://opcfoundation.org/UA/SecurityPolicy#Basic256Sha256",
        "http://opcfoundation.org/UA/SecurityPolicy#Aes128_Sha256_RsaOaep", "http://opcfoundation.org/UA/SecurityPolicy#Aes256_Sha256_RsaPss"]
      : ["http://opcfoundation.org/UA/SecurityPolicy#None"],
    allowAnonymous: true,
    userManager: opts.user
      ? { isValidUser: (name, password) => name === opts.user && password === (process.env.TIEFLOW_PEER_PASSWORD ?? "") }
      : undefined,
  });
  await server.initialize();
  const addressSpace = server.engine.addressSpace;
  const ns = addressSpace.registerNamespace("urn:example:plant-sim");
  const plant = ns.addFolder(addressSpace.rootFolder.objects, { browseName: "Plant", nodeId: "s=Plant" });
  const unit = ns.addObject({ organizedBy: plant, browseName: "Unit1", nodeId: "s=Plant.Unit1" });
  nodes.clear();
  for (const name of ["Flow", "Temperature", "Ramp", "Quality", "Constant"]) {
    nodes.set(name, ns.addVariable({
      componentOf: unit,
      browseName: name,
      nodeId: `s=Plant.Unit1.${name}`,
      dataType: "Double",
      minimumSamplingInterval: 100,
      value: dbl(0),
    }));
  }
  nodes.set("Level", ns.addAnalogDataItem({
    componentOf: unit,
    browseName: "Level",
    nodeId: "s=Plant.Unit1.Level",
    dataType: "Double",
    minimumSamplingInterval: 100,
    engineeringUnitsRange: { low: 0, high: 100 },
    value: dbl(0),
  }));
  const tags = ns.addFolder(plant, { browseName: "Tags", nodeId: "s=Plant.Tags" });
  for (let i = 0; i < opts.tags; i++) {
    nodes.set(tagName(i), ns.addVariable({
      componentOf: tags,
      browseName: tagName(i),
      nodeId: `s=Plant.Tags.${tagName(i)}`,
      dataType: "Double",
      minimumSamplingInterval: 100,
      value: dbl(i),
    }));
  }
  // A fixed source time so that tests can check that it arrives unchanged.
  setNode("Constant", 42, StatusCodes.Good, new Date(Date.UTC(2026, 0, 1, 0, 0, 0)));
  tick();
  await server.start();
  boundPort = server.endpoints[0].port;
  timer = setInterval(tick, opts.tick);
  console.log(`READY opc.tcp://127.0.0.1:${boundPort}/sim`);
}

async function stop() {
  if (timer) { clearInterval(timer); timer = null; }
  if (server) {
    const s = server;
    server = null;
    await s.shutdown(500);
  }
}

let busy = false;
async function restart() {
  if (busy) { return; }
  busy = true;
  try {
    await stop();
    await new Promise((resolve) => setTimeout(resolve, opts.down));
    await start();
  } finally {
    busy = false;
  }
}

async function quit() {
  try { await stop(); } finally { process.exit(0); }
}

function parseStatus(name) {
  if (name === undefined) { return StatusCodes.Good; }
  const code = StatusCodes[name];
  if (!code) { throw new Error(`unknown status ${name} (use a name such as Good, UncertainLastUsableValue, BadSensorFailure)`); }
  return code;
}

function command(line) {
  const words = line.trim().split(/\s+/).filter((w) => w.length > 0);
  if (words.length === 0) { return; }
  try {
    switch (words[0]) {
      case "pause": paused = true; console.log("OK paused"); break;
      case "resume": paused = false; console.log("OK resumed"); break;
      case "restart": restart().then(() => console.log("OK restarted")); break;
      case "set": {
        const [, name, valueText, statusName, timeText] = words;
        if (!nodes.has(name)) { throw new Error(`unknown variable ${name}`); }
        const value = Number(valueText);
        if (!Number.isFinite(value)) { throw new Error(`value ${valueText} is not a number`); }
        const time = timeText ? new Date(timeText) : new Date();
        if (Number.isNaN(time.getTime())) { throw new Error(`time ${timeText} is not ISO 8601`); }
        setNode(name, value, parseStatus(statusName), time);
        console.log(`OK set ${name}`);
        break;
      }
      default: throw new Error(`unknown command ${words[0]}`);
    }
  } catch (e) {
    console.log(`ERR ${e.message}`);
  }
}

process.on("SIGTERM", quit);
process.on("SIGINT", quit);
process.on("SIGUSR2", () => { restart(); });
const rl = readline.createInterface({ input: process.stdin });
rl.on("line", command);
if (opts.stdinEofExit) { rl.on("close", quit); }

start().catch((e) => { console.log(`ERR start failed: ${e.message}`); process.exit(1); });

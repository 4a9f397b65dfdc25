// Probe client built on node-opcua: browses, reads and subscribes against any OPC UA endpoint (Tieflow's own
// server in particular) and prints one JSON object per line on stdout.
//
//   node probe.mjs <url> [--browse NODEID] [--depth N] [--read a,b] [--attributes] [--path /Objects/2:Plant/...]
//                  [--subscribe a,b] [--seconds S] [--deadband X] [--deadband-type abs|pct] [--rb BYTES]
//                  [--must-exist] [--security MODE:POLICY] [--user NAME] (password from TIEFLOW_PROBE_PASSWORD)
//                  [--pki DIR] [--lifetime MS]
//
// Lines: {"kind":"endpoints",...} {"kind":"browse",...} {"kind":"read",...} {"kind":"translate",...}
// {"kind":"subscription",...} {"kind":"item",...} {"kind":"data",...} {"kind":"event",...} and last
// {"kind":"summary",...}; a failure prints {"kind":"error","message":...} and exits 1.
import {
  OPCUAClient, AttributeIds, BrowseDirection, ClientSubscription, ClientMonitoredItem, DataChangeFilter,
  DeadbandType, MessageSecurityMode, SecurityPolicy, StatusCodes, TimestampsToReturn, makeBrowsePath,
  DataChangeTrigger,
} from "node-opcua-client";
import { OPCUACertificateManager } from "node-opcua-certificate-manager";
import os from "node:os";
import path from "node:path";

function fail(message) {
  emit({ kind: "error", message });
  process.exit(1);
}

function emit(obj) {
  process.stdout.write(JSON.stringify(obj) + "\n");
}

function parseArgs(argv) {
  if (argv.length === 0 || argv[0].startsWith("--")) { fail("usage: probe.mjs <url> [options]"); }
  const opts = {
    url: argv[0], browse: null, depth: 3, read: [], attributes: false, path: null, subscribe: [], seconds: 3,
    deadband: null, deadbandType: "abs", rb: 0, mustExist: false, security: "None", user: null, pki: null, lifetime: 0,
  };
  for (let i = 1; i < argv.length; i++) {
    const a = argv[i];
    const next = () => {
      if (i + 1 >= argv.length) { fail(`option ${a} needs a value`); }
      return argv[++i];
    };
    switch (a) {
      case "--browse": opts.browse = next(); break;
      case "--depth": opts.depth = Number(next()); break;
      case "--read": opts.read = next().split(","); break;
      case "--attributes": opts.attributes = true; break;
      case "--path": opts.path = next(); break;
      case "--subscribe": opts.subscribe = next().split(","); break;
      case "--seconds": opts.seconds = Number(next()); break;
      case "--deadband": opts.deadband = Number(next()); break;
      case "--deadband-type": opts.deadbandType = next(); break;
      case "--rb": opts.rb = Number(next()); break;
      case "--must-exist": opts.mustExist = true; break;
      case "--security": opts.security = next(); break;
      case "--user": opts.user = next(); break;
      case "--pki": opts.pki = next(); break;
      case "--lifetime": opts.lifetime = Number(next()); break;
      default: fail(`unknown option ${a}`);
    }
  }
  return opts;
}

const opts = parseArgs(process.argv.slice(2));

function statusName(sc) {
  return sc ? sc.name : "Good";
}

function iso(d) {
  return d ? d.toISOString() : null;
}

function plainValue(variant) {
  if (!variant) { return null; }
  const v = variant.value;
  if (v === null || v === undefined) { return null; }
  if (ArrayBuffer.isView(v) || Array.isArray(v)) { return Array.from(v, (x) => (typeof x === "object" && x !== null ? x.toString() : x)); }
  if (typeof v === "object") { return v.toString(); }
  if (typeof v === "bigint") { return v.toString(); }
  return v;
}

function dataValueJson(dv) {
  return {
    value: plainValue(dv.value),
    dataType: dv.value ? dv.value.dataType : null,
    status: statusName(dv.statusCode),
    statusCode: dv.statusCode ? dv.statusCode.value : 0,
    src: iso(dv.sourceTimestamp),
    srv: iso(dv.serverTimestamp),
  };
}

async function browseAll(session, nodeId) {
  // Browse one node fully, following continuation points with BrowseNext.
  let result = await session.browse({
    nodeId, browseDirection: BrowseDirection.Forward, referenceTypeId: "HierarchicalReferences",
    includeSubtypes: true, nodeClassMask: 0, resultMask: 63,
  });
  if (result.statusCode.isNotGood()) { return { status: statusName(result.statusCode), refs: [], nexts: 0 }; }
  const refs = [...(result.references ?? [])];
  let nexts = 0;
  while (result.continuationPoint && result.continuationPoint.length > 0) {
    result = await session.browseNext(result.continuationPoint, false);
    nexts++;
    if (result.statusCode.isNotGood()) { return { status: statusName(result.statusCode), refs, nexts }; }
    refs.push(...(result.references ?? []));
  }
  return { status: "Good", refs, nexts };
}

async function browseTree(session, nodeId, depth, seen) {
  if (depth < 0 || seen.has(nodeId)) { return; }
  seen.add(nodeId);
  const { status, refs, nexts } = await browseAll(session, nodeId);
  emit({
    kind: "browse", node: nodeId, status, browseNexts: nexts,
    references: refs.map((r) => ({
      nodeId: r.nodeId.toString(), browseName: r.browseName.toString(), displayName: r.displayName.text ?? null,
      nodeClass: r.nodeClass, isForward: r.isForward, referenceTypeId: r.referenceTypeId.toString(),
      typeDefinition: r.typeDefinition.toString(),
    })),
  });
  for (const r of refs) {
    const child = r.nodeId.toString();
    if (child === "ns=0;i=2253" || child === "i=2253") { continue; }
    await browseTree(session, child, depth - 1, seen);
  }
}

async function main() {
  const certificateManager = new OPCUACertificateManager({
    rootFolder: opts.pki ?? path.join(os.tmpdir(), "tieflow-probe-pki"),
    automaticallyAcceptUnknownCertificate: true,
  });
  const clientOptions = {
    applicationName: "tieflow-interop-probe",
    applicationUri: "urn:example:tieflow-interop-probe",
    securityMode: MessageSecurityMode[opts.security.split(":")[0]],
    securityPolicy: SecurityPolicy[opts.security.split(":")[1] ?? "None"],
    endpointMustExist: opts.mustExist,
    clientCertificateManager: certificateManager,
    connectionStrategy: { initialDelay: 500, maxDelay: 2000, maxRetry: 2 },
    keepSessionAlive: false,
  };
  if (clientOptions.securityMode === undefined || clientOptions.securityPolicy === undefined) { fail(`unknown --security ${opts.security}`); }
  if (opts.lifetime > 0) { clientOptions.defaultSecureTokenLifetime = opts.lifetime; }
  if (opts.rb > 0) {
    clientOptions.transportSettings = { receiveBufferSize: opts.rb, sendBufferSize: opts.rb };
  }
  const client = OPCUAClient.create(clientOptions);
  for (const name of ["connection_lost", "start_reconnection", "backoff", "after_reconnection",
    "connection_reestablished"]) {
    client.on(name, () => emit({ kind: "event", name }));
  }
  await client.connect(opts.url);
  const endpoints = await client.getEndpoints();
  emit({
    kind: "endpoints",
    endpoints: endpoints.map((e) => ({
      endpointUrl: e.endpointUrl, securityMode: e.securityMode, securityPolicyUri: e.securityPolicyUri,
      applicationUri: e.server.applicationUri,
      userTokens: (e.userIdentityTokens ?? []).map((t) => ({ policyId: t.policyId, tokenType: t.tokenType })),
    })),
  });
  const session = await client.createSession(opts.user
    ? { type: 1, userName: opts.user, password: process.env.TIEFLOW_PROBE_PASSWORD ?? "" }
    : undefined);
  emit({ kind: "session", sessionId: session.sessionId.toString(), securityMode: client.securityMode, securityPolicy: client.securityPolicy });
  if (opts.lifetime > 0) {
    client.on("security_token_renewed", () => emit({ kind: "event", name: "token_renewed" }));
  }
  const counts = {};
  try {
    if (opts.browse) {
      await browseTree(session, opts.browse, opts.depth, new Set());
    }
    if (opts.path) {
      const bp = makeBrowsePath("RootFolder", opts.path);
      const r = await session.translateBrowsePath(bp);
      emit({
        kind: "translate", path: opts.path, status: statusName(r.statusCode),
        targets: (r.targets ?? []).map((t) => ({ nodeId: t.targetId.toString(), remaining: t.remainingPathIndex })),
      });
    }
    if (opts.read.length > 0) {
      const attributeIds = opts.attributes
        ? [AttributeIds.NodeClass, AttributeIds.BrowseName, AttributeIds.DisplayName, AttributeIds.DataType,
          AttributeIds.ValueRank, AttributeIds.AccessLevel, AttributeIds.MinimumSamplingInterval, AttributeIds.Value]
        : [AttributeIds.Value];
      const items = [];
      for (const nodeId of opts.read) {
        for (const attributeId of attributeIds) { items.push({ nodeId, attributeId }); }
      }
      const values = await session.read(items, 0);
      values.forEach((dv, i) => emit({ kind: "read", node: items[i].nodeId, attributeId: items[i].attributeId, ...dataValueJson(dv) }));
    }
    if (opts.subscribe.length > 0) {
      const subscription = ClientSubscription.create(session, {
        requestedPublishingInterval: 250, requestedLifetimeCount: 60, requestedMaxKeepAliveCount: 6,
        maxNotificationsPerPublish: 0, publishingEnabled: true, priority: 1,
      });
      subscription.on("keepalive", () => emit({ kind: "event", name: "keepalive" }));
      await new Promise((resolve, reject) => {
        subscription.once("started", resolve);
        subscription.once("internal_error", reject);
      });
      emit({
        kind: "subscription", id: subscription.subscriptionId, publishingInterval: subscription.publishingInterval,
        lifetimeCount: subscription.lifetimeCount, maxKeepAliveCount: subscription.maxKeepAliveCount,
      });
      let filter = null;
      if (opts.deadband !== null) {
        filter = new DataChangeFilter({
          trigger: DataChangeTrigger.StatusValue,
          deadbandType: opts.deadbandType === "pct" ? DeadbandType.Percent : DeadbandType.Absolute,
          deadbandValue: opts.deadband,
        });
      }
      for (const nodeId of opts.subscribe) {
        counts[nodeId] = 0;
        const item = ClientMonitoredItem.create(subscription, { nodeId, attributeId: AttributeIds.Value },
          { samplingInterval: 100, queueSize: 10, discardOldest: true, filter }, TimestampsToReturn.Both);
        item.on("changed", (dv) => { counts[nodeId]++; emit({ kind: "data", node: nodeId, ...dataValueJson(dv) }); });
        item.on("err", (message) => emit({ kind: "item", node: nodeId, status: "error", message: String(message) }));
        item.on("initialized", () => emit({
          kind: "item", node: nodeId, status: "Good", monitoredItemId: item.monitoredItemId,
          samplingInterval: item.monitoringParameters.samplingInterval, queueSize: item.monitoringParameters.queueSize,
        }));
      }
      await new Promise((resolve) => setTimeout(resolve, opts.seconds * 1000));
      await subscription.terminate();
    }
  } finally {
    await session.close(true);
    await client.disconnect();
  }
  emit({ kind: "summary", notifications: counts });
}

main().then(() => process.exit(0), (e) => fail(e.message ?? String(e)));

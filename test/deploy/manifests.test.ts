// The Kubernetes manifests in deploy/kubernetes/: every object validated against the Kubernetes API schemas
// shipped in the kubernetes-models package (validators compiled from the upstream OpenAPI schema with ajv), then
// the references between objects and to the program itself: labels and selectors, ports, probe ports and
// service names, Secret and ConfigMap names and keys, mounted file paths, CLI options, $(VAR) expansions.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { Command } from '../../src/cli/command-line.js';
import { describe, expect, it } from 'vitest';
import { parseAllDocuments } from 'yaml';
import { register as registerHealth } from '../../src/cli/health.js';
import { register as registerServe } from '../../src/cli/serve.js';
import { register as registerSolve } from '../../src/cli/solve.js';
import { register as registerSweep } from '../../src/cli/sweep.js';
import { packageRoot } from '../../src/problem/proto-options.js';
import { SERVICE_NAME } from '../../src/service/proto.js';
import { TOKEN_FILE_ENV } from '../../src/service/security.js';
import { gridFromJson } from '../../src/client/sweep.js';

type Json = any; // eslint-disable-line @typescript-eslint/no-explicit-any

const directory = join(packageRoot(), 'deploy', 'kubernetes');

interface Manifest {
  file: string;
  object: Json;
}

function loadManifests(): Manifest[] {
  const manifests: Manifest[] = [];
  for (const file of readdirSync(directory).filter((name) => name.endsWith('.yaml')).sort()) {
    for (const document of parseAllDocuments(readFileSync(join(directory, file), 'utf8'))) {
      if (document.errors.length > 0) throw new Error(`${file}: ${document.errors.map((e) => e.message).join('; ')}`);
      manifests.push({ file, object: document.toJS() });
    }
  }
  return manifests;
}

const manifests = loadManifests();
const objects = manifests.map((m) => m.object);
const named = (kind: string, name: string): Json => objects.find((o) => o.kind === kind && o.metadata?.name === name);
const ofKind = (kind: string): Json[] => objects.filter((o) => o.kind === kind);

/** The Kubernetes model class of an object: kubernetes-models/<apiVersion>/<Kind> (core v1 is plain `v1`). */
async function validateAgainstSchema(object: Json): Promise<void> {
  const module = (await import(`kubernetes-models/${object.apiVersion}/${object.kind}`)) as Record<string, new (data: Json) => { validate(): void }>;
  const Model = module[object.kind];
  if (Model === undefined) throw new Error(`no schema for ${object.apiVersion} ${object.kind}`);
  new Model(object).validate();
}

/** Pods the manifests create: owner, labels and pod spec. */
interface PodTemplate {
  owner: string;
  labels: Record<string, string>;
  spec: Json;
}
const podTemplates: PodTemplate[] = objects
  .filter((o) => o.kind === 'Deployment' || o.kind === 'Job')
  .map((o) => ({ owner: `${o.kind}/${o.metadata.name}`, labels: o.spec.template.metadata?.labels ?? {}, spec: o.spec.template.spec }));

const matches = (selector: Record<string, string> | undefined, labels: Record<string, string>): boolean =>
  Object.entries(selector ?? {}).every(([key, value]) => labels[key] === value);
const selected = (selector: Record<string, string> | undefined): PodTemplate[] => podTemplates.filter((pod) => matches(selector, pod.labels));

const containers = (pod: PodTemplate): Json[] => pod.spec.containers;
const containerPorts = (pod: PodTemplate): Json[] => containers(pod).flatMap((c: Json) => c.ports ?? []);
/** The value following `--flag` in a container's args. */
const argument = (container: Json, flag: string): string | undefined => {
  const index = (container.args ?? []).indexOf(flag);
  return index === -1 ? undefined : container.args[index + 1];
};

describe('deploy/kubernetes: schemas', () => {
  it('parses every document, and each object names its apiVersion, kind and name', () => {
    expect(manifests.length).toBeGreaterThanOrEqual(12);
    for (const { file, object } of manifests) {
      expect(typeof object.apiVersion, file).toBe('string');
      expect(typeof object.kind, file).toBe('string');
      expect(object.metadata?.name, file).toMatch(/^[a-z0-9]([-a-z0-9]*[a-z0-9])?$/);
    }
    const names = objects.map((o) => `${o.kind}/${o.metadata.name}`);
    expect(new Set(names).size).toBe(names.length);
  });

  it('validates every object against the Kubernetes API schema of its kind', async () => {
    for (const { file, object } of manifests) {
      await expect(validateAgainstSchema(object), `${file}: ${object.kind}/${object.metadata.name}`).resolves.toBeUndefined();
    }
  });

  it('the schemas do reject a broken object (a port as text, a count as text, a Service port without its number, an unknown apiVersion)', async () => {
    const deployment = structuredClone(named('Deployment', 'renyi-bound'));
    deployment.spec.template.spec.containers[0].ports[0].containerPort = 'fifty';
    await expect(validateAgainstSchema(deployment)).rejects.toThrow(/containerPort must be integer/);
    const job = structuredClone(named('Job', 'renyi-bound-sweep'));
    job.spec.completions = '4';
    await expect(validateAgainstSchema(job)).rejects.toThrow(/completions must be integer/);
    const service = structuredClone(named('Service', 'renyi-bound'));
    delete service.spec.ports[0].port;
    await expect(validateAgainstSchema(service)).rejects.toThrow(/spec\/ports\/0 must have required property .?port/);
    await expect(validateAgainstSchema({ ...service, apiVersion: 'v2' })).rejects.toThrow();
  });
});

describe('deploy/kubernetes: cross-references', () => {
  it('each workload selects its own pods, and every Service, PodDisruptionBudget and NetworkPolicy selects some', () => {
    for (const o of objects.filter((x) => x.kind === 'Deployment')) {
      expect(matches(o.spec.selector.matchLabels, o.spec.template.metadata.labels), o.metadata.name).toBe(true);
    }
    for (const o of ofKind('Service')) expect(selected(o.spec.selector).length, `Service/${o.metadata.name}`).toBeGreaterThan(0);
    for (const o of ofKind('PodDisruptionBudget')) expect(selected(o.spec.selector.matchLabels).length, o.metadata.name).toBeGreaterThan(0);
    for (const o of ofKind('NetworkPolicy')) {
      expect(selected(o.spec.podSelector.matchLabels).length, o.metadata.name).toBeGreaterThan(0);
      for (const rule of [...(o.spec.ingress ?? []).flatMap((r: Json) => r.from ?? []), ...(o.spec.egress ?? []).flatMap((r: Json) => r.to ?? [])]) {
        if (rule.podSelector) expect(selected(rule.podSelector.matchLabels).length, `${o.metadata.name}: peer selector`).toBeGreaterThan(0);
      }
    }
  });

  it('Service ports lead to container ports of the selected pods; NetworkPolicy ports are ports those pods open', () => {
    for (const service of ofKind('Service')) {
      for (const port of service.spec.ports) {
        for (const pod of selected(service.spec.selector)) {
          const target = port.targetPort ?? port.port;
          const found = containerPorts(pod).some((p: Json) => p.name === target || p.containerPort === target);
          expect(found, `Service/${service.metadata.name} → ${pod.owner}: ${target}`).toBe(true);
        }
      }
    }
    for (const policy of ofKind('NetworkPolicy')) {
      for (const rule of policy.spec.ingress ?? []) {
        for (const port of rule.ports ?? []) {
          for (const pod of selected(policy.spec.podSelector.matchLabels)) {
            expect(containerPorts(pod).some((p: Json) => p.containerPort === port.port || p.name === port.port), `${policy.metadata.name}: ${port.port}`).toBe(true);
          }
        }
      }
    }
  });

  it('the headless Service is headless and serves the same replicas and port as the main one', () => {
    const main = named('Service', 'renyi-bound');
    const headless = named('Service', 'renyi-bound-headless');
    expect(headless.spec.clusterIP).toBe('None');
    expect(headless.spec.selector).toEqual(main.spec.selector);
    expect(headless.spec.ports.map((p: Json) => p.port)).toEqual(main.spec.ports.map((p: Json) => p.port));
  });

  it('gRPC probes hit the plaintext health port the server is told to open, asking for services it registers', () => {
    const server = named('Deployment', 'renyi-bound').spec.template.spec.containers[0];
    const healthPort = Number(argument(server, '--health-port'));
    expect(server.ports.some((p: Json) => p.containerPort === healthPort)).toBe(true);
    for (const probe of [server.readinessProbe, server.livenessProbe]) {
      expect(probe.grpc.port).toBe(healthPort);
      expect(['', SERVICE_NAME]).toContain(probe.grpc.service ?? '');
    }
    expect(Number(argument(server, '--port'))).toBe(server.ports.find((p: Json) => p.name === 'grpc').containerPort);
    // A rolling update or a drained node never takes more than one replica away.
    const budget = ofKind('PodDisruptionBudget')[0];
    expect(budget.spec.maxUnavailable).toBeLessThan(named('Deployment', 'renyi-bound').spec.replicas);
  });

  it('every Secret and ConfigMap a pod reads exists with the keys it reads, and every mount names a volume', () => {
    const keysOf = (o: Json): string[] => Object.keys({ ...(o.data ?? {}), ...(o.stringData ?? {}) });
    for (const pod of podTemplates) {
      const volumes = new Map<string, Json>(pod.spec.volumes.map((v: Json) => [v.name, v]));
      for (const volume of volumes.values()) {
        const source = volume.secret ?? volume.configMap;
        if (source === undefined) continue;
        const target = volume.secret ? named('Secret', source.secretName) : named('ConfigMap', source.name);
        expect(target, `${pod.owner}: volume ${volume.name}`).toBeDefined();
        for (const item of source.items ?? []) expect(keysOf(target), `${pod.owner}: ${volume.name} key ${item.key}`).toContain(item.key);
      }
      for (const container of containers(pod)) {
        for (const mount of container.volumeMounts ?? []) expect(volumes.has(mount.name), `${pod.owner}: mount ${mount.name}`).toBe(true);
        for (const env of container.env ?? []) {
          const ref = env.valueFrom?.secretKeyRef;
          if (ref) expect(keysOf(named('Secret', ref.name))).toContain(ref.key);
        }
      }
      for (const volume of volumes.values()) {
        if (volume.persistentVolumeClaim) expect(named('PersistentVolumeClaim', volume.persistentVolumeClaim.claimName), pod.owner).toBeDefined();
      }
    }
    // The TLS Secrets carry the standard kubernetes.io/tls keys plus the CA.
    for (const name of ['renyi-bound-tls', 'renyi-bound-client-tls']) {
      expect(named('Secret', name).type).toBe('kubernetes.io/tls');
      expect(keysOf(named('Secret', name)).sort()).toEqual(['ca.crt', 'tls.crt', 'tls.key']);
    }
  });

  it('every file a command line or environment variable names lies in a mounted volume that provides it', () => {
    const fileFlags = ['--tls-cert', '--tls-key', '--tls-client-ca', '--tls-ca', '--token-file'];
    for (const pod of podTemplates) {
      const volumes = new Map<string, Json>(pod.spec.volumes.map((v: Json) => [v.name, v]));
      for (const container of containers(pod)) {
        const paths = [
          ...fileFlags.map((flag) => argument(container, flag)).filter((p): p is string => p !== undefined),
          ...(container.env ?? []).filter((e: Json) => e.name === TOKEN_FILE_ENV).map((e: Json) => e.value),
          ...(container.args ?? []).filter((a: string) => a.endsWith('.json') && a.startsWith('/')),
        ];
        if (String(container.image).includes('renyi-bound')) expect(paths.length, pod.owner).toBeGreaterThan(0);
        for (const path of paths) {
          const mount = (container.volumeMounts ?? []).find((m: Json) => path.startsWith(`${m.mountPath}/`));
          expect(mount, `${pod.owner}: ${path}`).toBeDefined();
          const source = volumes.get(mount.name).secret ?? volumes.get(mount.name).configMap;
          const file = path.slice(mount.mountPath.length + 1);
          expect(source.items.map((i: Json) => i.path), `${pod.owner}: ${path}`).toContain(file);
        }
      }
    }
  });

  it('command lines use options the program has, and $(VAR) only for variables the container defines', () => {
    const program = new Command('renyi-bound');
    for (const register of [registerServe, registerSweep, registerSolve, registerHealth]) register(program);
    const renyiBound = podTemplates.flatMap((pod) => containers(pod).filter((c: Json) => String(c.image).includes('renyi-bound')).map((c: Json) => ({ pod, c })));
    expect(renyiBound.length).toBeGreaterThanOrEqual(3);
    for (const { pod, c } of renyiBound) {
      const command = program.commands.find((x) => x.name === c.args[0]);
      expect(command, `${pod.owner}: ${c.args[0]}`).toBeDefined();
      const known = command!.options.map((o) => o.long);
      for (const flag of c.args.filter((a: string) => a.startsWith('--'))) expect(known, `${pod.owner}: ${flag}`).toContain(flag);
      const defined = new Set((c.env ?? []).map((e: Json) => e.name));
      for (const reference of c.args.join(' ').matchAll(/\$\(([A-Z_]+)\)/g)) expect(defined.has(reference[1]), `${pod.owner}: $(${reference[1]})`).toBe(true);
    }
  });

  it('addresses on command lines name Services with those ports (replicas through the headless one, Redis)', () => {
    const server = named('Deployment', 'renyi-bound').spec.template.spec.containers[0];
    const redis = new URL(argument(server, '--redis-url')!);
    expect(named('Service', redis.hostname).spec.ports.map((p: Json) => p.port)).toContain(Number(redis.port));
    for (const job of ofKind('Job')) {
      const [host, port] = argument(job.spec.template.spec.containers[0], '--server')!.split(':');
      const service = named('Service', host);
      expect(service?.spec.clusterIP, `Job/${job.metadata.name}`).toBe('None');
      expect(service.spec.ports.map((p: Json) => p.port)).toContain(Number(port));
      // The replicas' NetworkPolicy lets these pods in.
      const policy = named('NetworkPolicy', 'renyi-bound');
      const clients = policy.spec.ingress.flatMap((r: Json) => r.from ?? []).map((f: Json) => f.podSelector?.matchLabels);
      expect(clients.some((selector: Json) => matches(selector, job.spec.template.metadata.labels)), `Job/${job.metadata.name}`).toBe(true);
    }
  });

  it('the sweep Job runs one shard per index, and its grid is a grid the program accepts', () => {
    const job = named('Job', 'renyi-bound-sweep');
    expect(job.spec.completionMode).toBe('Indexed');
    const shard = argument(job.spec.template.spec.containers[0], '--shard')!;
    expect(shard).toBe(`$(JOB_COMPLETION_INDEX)/${job.spec.completions}`);
    expect(job.spec.parallelism).toBeLessThanOrEqual(job.spec.completions);
    const grid = gridFromJson(JSON.parse(named('ConfigMap', 'renyi-bound-sweep-grid').data['grid.json']));
    expect(grid.axes?.[0]?.values?.length).toBeGreaterThan(0);
    // The assemble step reads the same grid, through the same replicas, without --shard.
    const assemble = named('Job', 'renyi-bound-sweep-assemble').spec.template.spec.containers[0];
    expect(assemble.args[1]).toBe(job.spec.template.spec.containers[0].args[1]);
    expect(argument(assemble, '--shard')).toBeUndefined();
  });

  it('every container has CPU and memory requests and a memory limit; Redis is an LRU cache without persistence', () => {
    for (const pod of podTemplates) {
      for (const container of containers(pod)) {
        expect(container.resources?.requests?.cpu, `${pod.owner}/${container.name}`).toBeDefined();
        expect(container.resources?.requests?.memory, `${pod.owner}/${container.name}`).toBeDefined();
        expect(container.resources?.limits?.memory, `${pod.owner}/${container.name}`).toBeDefined();
        expect(container.securityContext?.allowPrivilegeEscalation, `${pod.owner}/${container.name}`).toBe(false);
      }
      expect(pod.spec.securityContext?.runAsNonRoot, pod.owner).toBe(true);
    }
    const args: string[] = named('Deployment', 'renyi-bound-redis').spec.template.spec.containers[0].args;
    const value = (flag: string) => args[args.indexOf(flag) + 1];
    expect(value('--maxmemory-policy')).toBe('allkeys-lru');
    expect(value('--save')).toBe('');
    expect(value('--appendonly')).toBe('no');
    expect(value('--maxmemory')).toMatch(/^\d+mb$/);
  });
});

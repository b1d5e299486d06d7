// The mapping file of the generated fleets the host benchmarks lint: machines placed on 40
// hypervisor hosts, half of them listed with 512 GiB of memory, the rest assumed at 1 TiB.

export const HOSTS = 40;

export const HOST_FLEET_MAPPING = `version: 1
include: ["defs/**/*.yaml"]
machines: "$.vms[*]"
disks: "$.volumes[*]"
fields:
  machine: { name: "$.hostname", memory: "$.ram", host: "$.hv" }
  disk: { name: "$.label", size: "$.capacity", clusterSize: "$.block", l2Cache: "$.tuning.l2", cleanupInterval: "$.tuning.sweep" }
assume:
  hostMemory: 1T
hosts:
${Array.from({ length: HOSTS / 2 }, (_, h) => `  - { name: hv-${h}, memory: 512G }`).join('\n')}
`;

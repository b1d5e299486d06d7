// The mapping file's schema (docs/mapping-file.md). The JSON Schema shipped for editors is generated from
// this one definition (scripts/generate-schema.ts), so the two cannot drift apart.
import { array, enum as oneOf, literal, number, object, record, string, toJSONSchema, union, type infer as Infer, type ZodOptional } from 'zod';

// Named imports instead of the library's `z` namespace: the namespace keeps every message locale of
// the library in the bundles (about 580 KiB that the extension and each CLI thread load at start-up,
// with the same English messages either way); these are the builders the schema uses.
const z = { array, enum: oneOf, literal, number, object, record, string, toJSONSchema, union };

const selector = z.string().min(1).describe('An RFC 9535 JSONPath selector, relative to the node selected before it');
// Read loosely here and exactly by the loader, whose messages say what a size must be.
const size = z
  .union([z.number(), z.string().min(1)])
  .describe('Bytes, or a number with a unit: K, M, G, T, P (or Ki.., KiB..: powers of 1024), kB, MB, GB, TB (powers of 1000)');

export const DISK_FIELDS = [
  'name', 'size', 'clusterSize', 'format', 'l2Cache', 'refcountCache', 'combinedCache', 'cacheEntrySize',
  'cleanupInterval', 'extendedL2', 'image', 'backing', 'requestSize', 'pattern', 'trace',
] as const;
export type DiskField = (typeof DISK_FIELDS)[number];
export const MACHINE_FIELDS = ['name', 'memory', 'host'] as const;
export type MachineField = (typeof MACHINE_FIELDS)[number];

const diskFieldDescriptions: Record<DiskField, string> = {
  name: 'The disk\'s name, shown in messages',
  size: 'Virtual size of the disk',
  clusterSize: 'Cluster size of the image',
  format: 'Disk format; only qcow2 disks are sized',
  l2Cache: 'Configured L2 cache size',
  refcountCache: 'Configured refcount cache size',
  combinedCache: 'Configured combined (L2 + refcount) cache size',
  cacheEntrySize: 'L2 cache entry size',
  cleanupInterval: 'Idle cache cleanup interval (seconds, or 90s, 10m, 1h; 0 is off)',
  extendedL2: 'Whether the image uses extended L2 entries (subclusters)',
  image: 'Path of the image file, relative to the definition file',
  backing: 'A backing image path, or a nested disk object',
  requestSize: 'Typical guest write size',
  pattern: 'Guest access pattern: random, sequential, mixed, zipf(S) or "P% on Q%"',
  trace: 'I/O trace file of the disk, or a list of them read in order (CSV, I/O log or block-layer trace text; .gz too), relative to the definition file',
};

const diskFields = z
  .object(Object.fromEntries(DISK_FIELDS.map((f) => [f, selector.optional().describe(diskFieldDescriptions[f])])) as Record<DiskField, ZodOptional<typeof selector>>)
  .strict();
const machineFields = z
  .object({
    name: selector.optional().describe('The machine\'s name'),
    memory: selector.optional().describe('Guest RAM, used for the cache budget'),
    host: selector.optional().describe('The name of the hypervisor host the machine runs on, used for the host budget'),
  })
  .strict();
// Read loosely here and exactly by the loader, like sizes.
const share = z.union([z.number(), z.string().min(1)]).describe('A fraction such as 0.02, or a percentage such as "2%"');

export const SEVERITY_SETTINGS = ['error', 'warning', 'info', 'off'] as const;

export const mappingSchema = z
  .object({
    $schema: z.string().optional(),
    version: z.literal(1).describe('Mapping file format version'),
    include: z.array(z.string().min(1)).optional().describe('Globs of definition files, relative to this file'),
    exclude: z.array(z.string().min(1)).optional().describe('Globs left out, relative to this file'),
    machines: selector.optional().describe('Selects each machine in a document; absent: the document is one machine'),
    disks: selector.describe('Selects each disk, relative to its machine'),
    fields: z
      .object({ machine: machineFields.optional(), disk: diskFields })
      .strict()
      .describe('Where each value sits, relative to its machine or disk'),
    assume: z
      .object({
        clusterSize: size.optional(),
        format: z.string().min(1).optional(),
        pattern: z.string().min(1).optional().describe('random, sequential, mixed, zipf(S) or "P% on Q%"'),
        requestSize: size.optional(),
        driver: z.enum(['current', 'legacy']).optional().describe('Which generation of driver defaults applies'),
        platform: z.enum(['linux', 'other']).optional().describe('Host platform whose defaults apply'),
        refcountBits: z.number().int().optional().describe('Refcount width of the images (default 16)'),
        targetHitRatio: z
          .union([z.number(), z.string().min(1)])
          .optional()
          .describe('Hit ratio the recommendation from a measured trace aims for: 0.99 or "99%" (default 99%)'),
        hostMemory: size.optional().describe('Memory of a host the hosts list does not name'),
      })
      .strict()
      .optional()
      .describe('Values used where a definition is silent'),
    budget: z
      .object({
        cacheShareOfMemory: z.number().gt(0).lte(1).optional().describe('Warn when a machine\'s caches exceed this share of its RAM'),
        hostCacheShareOfMemory: share.optional().describe('Warn when the caches of all machines on a host exceed this share of its memory (default 2%)'),
      })
      .strict()
      .optional(),
    hosts: z
      .array(
        z
          .object({
            name: z.string().min(1).describe('The host name, as machines name it'),
            memory: size.describe('The host\'s memory'),
            cacheShare: share.optional().describe('This host\'s cache share, over budget.hostCacheShareOfMemory'),
          })
          .strict(),
      )
      .optional()
      .describe('Hypervisor hosts and their memory, for the host-cache-budget rule'),
    rules: z.record(z.string(), z.enum(SEVERITY_SETTINGS)).optional().describe('Severity per rule id, or off'),
    accept: z
      .array(
        z
          .object({
            rule: z.string().min(1),
            pointer: z.string().describe('RFC 6901 JSON Pointer of the disk, machine or value, in the definition file'),
            file: z.string().min(1).optional().describe('Definition file, relative to this file; absent: every file'),
            reason: z.string().min(1).describe('Why this exception was accepted'),
          })
          .strict(),
      )
      .optional()
      .describe('Reviewed exceptions (JSON files have no comments)'),
  })
  .strict();

export type MappingFile = Infer<typeof mappingSchema>;

export function mappingJsonSchema(): Record<string, unknown> {
  return {
    ...z.toJSONSchema(mappingSchema, { target: 'draft-7' }),
    title: 'cachewright mapping file',
  } as Record<string, unknown>;
}

// The cautions of docs/sources.md, shown wherever the tool suggests changing a disk's settings.
export const CAUTIONS = {
  reopen: 'Cache settings take effect when the disk is opened: restart the VM or reopen the disk.',
  hostMemory: 'Bigger caches spend host memory per disk and per backing layer: check the host\'s headroom before raising them across a fleet.',
  fixedAtCreation: 'Cluster size and extended L2 are fixed when an image is created: changing them means converting the image into a new file. Back up first and verify the copy before switching a VM to it.',
  tracePeriod: 'A trace shows only the period it covers: trace the busiest period (month-end runs, backups, reindexing) before sizing from it.',
  review: 'These are recommendations for review, not a guarantee: follow your organisation\'s operating practices and change control.',
} as const;

export type CautionId = keyof typeof CAUTIONS;

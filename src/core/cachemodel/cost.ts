// A deliberately simple cost model for the throughput estimate: every guest I/O pays one device access
// for its data, and every cache miss adds one more device access that reads a cache entry of metadata.
// An access costs the device's latency plus transfer time. The latencies are round figures for each
// device class, recalled (from memory), not measured: they are assumptions the caller can override.

import { failOn, ok, type ModelResult } from './result';

export interface DeviceLatency {
  /** A label for reports, e.g. "nvme" or the caller's own name. */
  name: string;
  /** Time to start one random access, in microseconds. */
  accessLatencyUs: number;
  /** Transfer rate once an access has started, in bytes per second. */
  bytesPerSecond: number;
}

export type DeviceClass = 'nvme' | 'ssd' | 'hdd';

/** Round figures (from memory) for queue-depth-one random reads; override them with measured values. */
export const DEVICE_CLASSES: Readonly<Record<DeviceClass, Readonly<DeviceLatency>>> = {
  nvme: { name: 'nvme', accessLatencyUs: 20, bytesPerSecond: 3e9 },
  ssd: { name: 'ssd', accessLatencyUs: 100, bytesPerSecond: 5e8 },
  hdd: { name: 'hdd', accessLatencyUs: 8000, bytesPerSecond: 1.5e8 },
};

export const DEFAULT_DEVICE_CLASS: DeviceClass = 'ssd';

export function resolveDevice(device: DeviceClass | DeviceLatency | undefined): ModelResult<DeviceLatency> {
  if (device === undefined) return ok(DEVICE_CLASSES[DEFAULT_DEVICE_CLASS]);
  if (typeof device === 'string') {
    const known = DEVICE_CLASSES[device];
    if (known === undefined) {
      return failOn('device', `unknown device class ${JSON.stringify(device)}: expected ${Object.keys(DEVICE_CLASSES).join(', ')}, or explicit latencies`);
    }
    return ok(known);
  }
  if (!Number.isFinite(device.accessLatencyUs) || device.accessLatencyUs < 0) {
    return failOn('device.accessLatencyUs', `device access latency ${String(device.accessLatencyUs)} µs is not allowed: use a number of microseconds, 0 or more`);
  }
  if (!Number.isFinite(device.bytesPerSecond) || device.bytesPerSecond <= 0) {
    return failOn('device.bytesPerSecond', `device transfer rate ${String(device.bytesPerSecond)} bytes/s is not allowed: use a number greater than 0`);
  }
  return ok(device);
}

export interface ThroughputEstimate {
  /** The device figures used: name them beside any number derived from them. */
  device: DeviceLatency;
  /** Mean time per guest I/O with the modelled misses, in microseconds. */
  ioTimeUs: number;
  /** The same with every lookup a hit (the cache covers the working set). */
  fullHitIoTimeUs: number;
  /** fullHitIoTimeUs / ioTimeUs: 1 means no loss to metadata reads. */
  relative: number;
}

export function accessTimeUs(device: DeviceLatency, bytes: number): number {
  return device.accessLatencyUs + (bytes / device.bytesPerSecond) * 1e6;
}

export function estimateThroughput(device: DeviceLatency, ioSize: bigint, entrySize: bigint, missesPerIo: number): ThroughputEstimate {
  const fullHitIoTimeUs = accessTimeUs(device, Number(ioSize));
  const ioTimeUs = fullHitIoTimeUs + missesPerIo * accessTimeUs(device, Number(entrySize));
  return { device, ioTimeUs, fullHitIoTimeUs, relative: ioTimeUs > 0 ? fullHitIoTimeUs / ioTimeUs : 1 };
}

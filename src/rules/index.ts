// Every rule, in the order their findings are listed for one place.
import { cacheNotAligned } from './cache-not-aligned';
import { cacheOptionsConflict } from './cache-options-conflict';
import { cleanupIntervalMissing } from './cleanup-interval-missing';
import { clusterCowAmplification } from './cluster-cow-amplification';
import { invalidSuppression } from './invalid-suppression';
import { invalidValue } from './invalid-value';
import { l2CacheOversized } from './l2-cache-oversized';
import { l2CacheUndersized } from './l2-cache-undersized';
import { machineCacheBudget } from './machine-cache-budget';
import { parseError } from './parse-error';
import { cacheEntrySizeSuggested } from './cache-entry-size-suggested';
import { backingChainCycle } from './backing-chain-cycle';
import { imageMismatch } from './image-mismatch';
import { imageUnreadable } from './image-unreadable';
import type { Rule } from './types';

export const RULES: readonly Rule[] = [
  parseError,
  invalidValue,
  cacheOptionsConflict,
  cacheNotAligned,
  l2CacheUndersized,
  l2CacheOversized,
  clusterCowAmplification,
  cleanupIntervalMissing,
  cacheEntrySizeSuggested,
  machineCacheBudget,
  imageMismatch,
  imageUnreadable,
  backingChainCycle,
  invalidSuppression,
];

export const RULE_IDS: readonly string[] = RULES.map((r) => r.id);
export const ruleById = (id: string): Rule | undefined => RULES.find((r) => r.id === id);
export type { Rule } from './types';

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
import { hostCacheBudget } from './host-cache-budget';
import { parseError } from './parse-error';
import { cacheEntrySizeSuggested } from './cache-entry-size-suggested';
import { backingChainCycle } from './backing-chain-cycle';
import { imageMismatch } from './image-mismatch';
import { imageUnreadable } from './image-unreadable';
import { l2CacheAboveWorkingSet } from './l2-cache-above-working-set';
import { traceUnreadable } from './trace-unreadable';
import type { Rule } from './types';

/** Checks at compile time that every rule sits under its own id. */
function registry<T extends { [K in keyof T]: Rule<K & string> }>(rules: T): T {
  return rules;
}

/** Every rule by its id; the order of the keys is the order findings at one place are listed in. */
export const RULE_REGISTRY = registry({
  'parse-error': parseError,
  'invalid-value': invalidValue,
  'cache-options-conflict': cacheOptionsConflict,
  'cache-not-aligned': cacheNotAligned,
  'l2-cache-undersized': l2CacheUndersized,
  'l2-cache-oversized': l2CacheOversized,
  'l2-cache-above-working-set': l2CacheAboveWorkingSet,
  'cluster-cow-amplification': clusterCowAmplification,
  'cleanup-interval-missing': cleanupIntervalMissing,
  'cache-entry-size-suggested': cacheEntrySizeSuggested,
  'machine-cache-budget': machineCacheBudget,
  'host-cache-budget': hostCacheBudget,
  'image-mismatch': imageMismatch,
  'image-unreadable': imageUnreadable,
  'trace-unreadable': traceUnreadable,
  'backing-chain-cycle': backingChainCycle,
  'invalid-suppression': invalidSuppression,
});

/** A rule id: a public contract (never renamed). */
export type RuleId = keyof typeof RULE_REGISTRY;

export const RULES: readonly Rule<RuleId>[] = Object.values(RULE_REGISTRY);
export const RULE_IDS: readonly RuleId[] = RULES.map((r) => r.id);

const KNOWN_IDS: ReadonlySet<string> = new Set(RULE_IDS);
export const isRuleId = (id: string): id is RuleId => KNOWN_IDS.has(id);

/** The rule with this id. */
export const ruleOf = (id: RuleId): Rule<RuleId> => RULE_REGISTRY[id];
/** A rule's wording with the literal type of each text: the orchestrator says its findings through it. */
export const wordingOf = <Id extends RuleId>(id: Id): (typeof RULE_REGISTRY)[Id]['wording'] => RULE_REGISTRY[id].wording;
/** The rule an outside string names, if any (a mapping file's or a finding's rule id). */
export const ruleById = (id: string): Rule<RuleId> | undefined => (isRuleId(id) ? RULE_REGISTRY[id] : undefined);
export type { Rule } from './types';
export { say } from './wording';

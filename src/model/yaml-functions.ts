// The yaml package's functions that the engine calls per node, bound once. The bundles load yaml
// as a CommonJS module, and a call through its import object (`yaml.isScalar(node)`) goes through a
// property getter each time: on the keystroke path, which walks every node after an edit, that
// getter alone cost more than the walk. Import these from here, not from 'yaml'.
import * as yaml from 'yaml';

export const isAlias = yaml.isAlias;
export const isMap = yaml.isMap;
export const isNode = yaml.isNode;
export const isPair = yaml.isPair;
export const isScalar = yaml.isScalar;
export const isSeq = yaml.isSeq;
export const parseDocument = yaml.parseDocument;
export const visit = yaml.visit;

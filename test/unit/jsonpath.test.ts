// JSONPath selectors against the examples of RFC 9535 itself (recalled from the RFC; each group
// names its section), through compileSelector/select as the mapping loader uses them: plain chains
// go through the fast walker, everything else through the RFC library. Results are compared as
// the RFC lists them (nodelists in order) and as normalized paths (§2.7) where the RFC gives them.
import { strict as assert } from 'node:assert';
import fc from 'fast-check';
import { exec, type JsonValue } from 'jsonpath-rfc9535';
import { compileSelector, parseJsonPointer, select, toJsonPointer, type PathSegment } from '../../src/model/jsonpath';
import { valueOf } from '../helpers/outcome';

const RFC = (section: string): string => `[RFC 9535 ${section}]`;
const RFC6901 = '[RFC 6901]';

const query = (expression: string, root: unknown): unknown[] => select(valueOf(compileSelector(expression)), root).map((m) => m.value);
const paths = (expression: string, root: unknown): PathSegment[][] => select(valueOf(compileSelector(expression)), root).map((m) => m.path);
/** RFC 9535 §2.7 normalized path of a node, e.g. $['store']['book'][2]['author']. */
const normalized = (path: readonly PathSegment[]): string =>
  `$${path.map((s) => (typeof s === 'number' ? `[${s}]` : `['${s.replace(/\\/g, '\\\\').replace(/'/g, "\\'")}']`)).join('')}`;
/** RFC 9535 §2.7: a normalized path escapes \b \f \n \r \t ' \\ and other controls as \uXXXX. */
const unescapeNormalized = (name: string): string =>
  name.replace(/\\(?:u([0-9a-fA-F]{4})|(.))/g, (_, hex: string | undefined, ch: string) =>
    hex ? String.fromCharCode(parseInt(hex, 16)) : ({ b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' } as Record<string, string>)[ch] ?? ch);
/** Nodelists whose order the RFC leaves open (members of an object) are compared as multisets. */
const sorted = (values: unknown[]): string[] => values.map((v) => JSON.stringify(v)).sort();

// RFC 9535 §1.5, Figure 1: the example JSON document. Author names and book titles are replaced by
// placeholders (house rule: no names of people or works); structure, categories, ISBNs and prices
// are the RFC's, and no query result depends on the replaced strings.
const BOOKSTORE = {
  store: {
    book: [
      { category: 'reference', author: 'Author 1', title: 'Title 1', price: 8.95 },
      { category: 'fiction', author: 'Author 2', title: 'Title 2', price: 12.99 },
      { category: 'fiction', author: 'Author 3', title: 'Title 3', isbn: '0-553-21311-3', price: 8.99 },
      { category: 'fiction', author: 'Author 4', title: 'Title 4', isbn: '0-395-19395-8', price: 22.99 },
    ],
    bicycle: { color: 'red', price: 399 },
  },
};
const [book0, book1, book2, book3] = BOOKSTORE.store.book;

describe(`jsonpath: ${RFC('§1.5 Table 2')} the bookstore queries`, () => {
  it('$.store.book[*].author: the authors of all books in the store', () => {
    assert.deepEqual(query('$.store.book[*].author', BOOKSTORE), ['Author 1', 'Author 2', 'Author 3', 'Author 4']);
  });
  it('$..author: all authors', () => {
    assert.deepEqual(query('$..author', BOOKSTORE), ['Author 1', 'Author 2', 'Author 3', 'Author 4']);
  });
  it('$.store.*: all things in the store, some books and a red bicycle', () => {
    assert.deepEqual(sorted(query('$.store.*', BOOKSTORE)), sorted([BOOKSTORE.store.book, BOOKSTORE.store.bicycle]));
  });
  it('$.store..price: the prices of everything in the store', () => {
    assert.deepEqual(sorted(query('$.store..price', BOOKSTORE)), sorted([8.95, 12.99, 8.99, 22.99, 399]));
  });
  it('$..book[2]: the third book', () => {
    assert.deepEqual(query('$..book[2]', BOOKSTORE), [book2]);
  });
  it('$..book[2].author: the third book\'s author', () => {
    assert.deepEqual(query('$..book[2].author', BOOKSTORE), ['Author 3']);
  });
  it('$..book[2].publisher: empty result, the third book has no "publisher" member', () => {
    assert.deepEqual(query('$..book[2].publisher', BOOKSTORE), []);
  });
  it('$..book[-1]: the last book in order', () => {
    assert.deepEqual(query('$..book[-1]', BOOKSTORE), [book3]);
  });
  it('$..book[0,1] and $..book[:2]: the first two books', () => {
    assert.deepEqual(query('$..book[0,1]', BOOKSTORE), [book0, book1]);
    assert.deepEqual(query('$..book[:2]', BOOKSTORE), [book0, book1]);
  });
  it('$..book[?@.isbn]: all books with an ISBN number', () => {
    assert.deepEqual(query('$..book[?@.isbn]', BOOKSTORE), [book2, book3]);
  });
  it('$..book[?@.price<10]: all books cheaper than 10', () => {
    assert.deepEqual(query('$..book[?@.price<10]', BOOKSTORE), [book0, book2]);
  });
  it('$..*: all member values and array elements contained in the input value (27 nodes)', () => {
    // store, book, bicycle, 4 books, their 4+4+5+5 members, and color and price of the bicycle.
    assert.equal(query('$..*', BOOKSTORE).length, 1 + 2 + 4 + 18 + 2);
  });
});

describe(`jsonpath: ${RFC('§2.7')} normalized paths of selected nodes`, () => {
  it("$..book[2].author is at $['store']['book'][2]['author'], JSON Pointer /store/book/2/author", () => {
    const [path] = paths('$..book[2].author', BOOKSTORE);
    assert.ok(path);
    assert.equal(normalized(path), "$['store']['book'][2]['author']");
    assert.equal(toJsonPointer(path), '/store/book/2/author');
  });
  it('the fast walker gives the same paths: $.store.book[*].title', () => {
    assert.deepEqual(paths('$.store.book[*].title', BOOKSTORE).map(normalized), [0, 1, 2, 3].map((i) => `$['store']['book'][${i}]['title']`));
  });
  it('a negative index is normalized to the non-negative one: $..book[-1] is $[\'store\'][\'book\'][3]', () => {
    assert.deepEqual(paths('$..book[-1]', BOOKSTORE).map(normalized), ["$['store']['book'][3]"]);
    assert.deepEqual(paths('$.store.book[-1]', BOOKSTORE).map(normalized), ["$['store']['book'][3]"]);
  });
});

describe(`jsonpath: ${RFC('§2.3.1.3')} name selector examples`, () => {
  const doc = { o: { 'j j': { 'k.k': 3 } }, "'": { '@': 2 } };
  it("$.o['j j'] selects {\"k.k\": 3}", () => assert.deepEqual(query("$.o['j j']", doc), [{ 'k.k': 3 }]));
  it("$.o['j j']['k.k'] and $.o[\"j j\"][\"k.k\"] select 3", () => {
    assert.deepEqual(query("$.o['j j']['k.k']", doc), [3]);
    assert.deepEqual(query('$.o["j j"]["k.k"]', doc), [3]);
  });
  it("$[\"'\"][\"@\"] selects 2", () => assert.deepEqual(query('$["\'"]["@"]', doc), [2]));
});

describe(`jsonpath: ${RFC('§2.3.2.3')} wildcard selector examples`, () => {
  const doc = { o: { j: 1, k: 2 }, a: [5, 3] };
  it('$[*] selects the object and the array', () => assert.deepEqual(sorted(query('$[*]', doc)), sorted([{ j: 1, k: 2 }, [5, 3]])));
  it('$.o[*] selects 1 and 2', () => assert.deepEqual(sorted(query('$.o[*]', doc)), ['1', '2']));
  it('$.o[*, *] selects 1, 2 twice', () => assert.deepEqual(sorted(query('$.o[*, *]', doc)), ['1', '1', '2', '2']));
  it('$.a[*] selects 5, 3 in order', () => assert.deepEqual(query('$.a[*]', doc), [5, 3]));
});

describe(`jsonpath: ${RFC('§2.3.3.3')} index selector examples`, () => {
  const doc = ['a', 'b'];
  it('$[1] selects "b"', () => assert.deepEqual(query('$[1]', doc), ['b']));
  it('$[-2] selects "a"', () => assert.deepEqual(query('$[-2]', doc), ['a']));
});

describe(`jsonpath: ${RFC('§2.3.4.3')} array slice selector examples`, () => {
  const doc = ['a', 'b', 'c', 'd', 'e', 'f', 'g'];
  it('$[1:3] selects b, c', () => assert.deepEqual(query('$[1:3]', doc), ['b', 'c']));
  it('$[5:] selects f, g', () => assert.deepEqual(query('$[5:]', doc), ['f', 'g']));
  it('$[1:5:2] selects b, d', () => assert.deepEqual(query('$[1:5:2]', doc), ['b', 'd']));
  it('$[5:1:-2] selects f, d', () => assert.deepEqual(query('$[5:1:-2]', doc), ['f', 'd']));
  it('$[::-1] selects the array in reverse', () => assert.deepEqual(query('$[::-1]', doc), ['g', 'f', 'e', 'd', 'c', 'b', 'a']));
});

describe(`jsonpath: ${RFC('§2.3.5.3')} filter selector examples`, () => {
  const doc = {
    a: [3, 5, 1, 2, 4, 6, { b: 'j' }, { b: 'k' }, { b: {} }, { b: 'kilo' }],
    o: { p: 1, q: 2, r: 3, s: 5, t: { u: 6 } },
    e: 'f',
  };
  it("$.a[?@.b == 'kilo'] and $.a[?(@.b == 'kilo')] select {\"b\": \"kilo\"}", () => {
    assert.deepEqual(query("$.a[?@.b == 'kilo']", doc), [{ b: 'kilo' }]);
    assert.deepEqual(query("$.a[?(@.b == 'kilo')]", doc), [{ b: 'kilo' }]);
  });
  it('$.a[?@>3.5] selects 5, 4, 6', () => assert.deepEqual(query('$.a[?@>3.5]', doc), [5, 4, 6]));
  it('$.a[?@.b] selects the four objects that have b', () => assert.deepEqual(query('$.a[?@.b]', doc), [{ b: 'j' }, { b: 'k' }, { b: {} }, { b: 'kilo' }]));
  it('$[?@.*] selects the array and the object (non-empty children)', () => assert.deepEqual(sorted(query('$[?@.*]', doc)), sorted([doc.a, doc.o])));
  it('$[?@[?@.b]] selects the array a', () => assert.deepEqual(query('$[?@[?@.b]]', doc), [doc.a]));
  it('$.o[?@<3, ?@<3] selects 1 and 2, twice', () => assert.deepEqual(sorted(query('$.o[?@<3, ?@<3]', doc)), ['1', '1', '2', '2']));
  it('$.a[?@<2 || @.b == "k"] selects 1 and {"b": "k"}', () => assert.deepEqual(query('$.a[?@<2 || @.b == "k"]', doc), [1, { b: 'k' }]));
  it('$.a[?match(@.b, "[jk]")] selects j and k', () => assert.deepEqual(query('$.a[?match(@.b, "[jk]")]', doc), [{ b: 'j' }, { b: 'k' }]));
  it('$.a[?search(@.b, "[jk]")] selects j, k and kilo', () => assert.deepEqual(query('$.a[?search(@.b, "[jk]")]', doc), [{ b: 'j' }, { b: 'k' }, { b: 'kilo' }]));
  it('$.o[?@>1 && @<4] selects 2 and 3', () => assert.deepEqual(sorted(query('$.o[?@>1 && @<4]', doc)), ['2', '3']));
  it('$.o[?@.u || @.x] selects {"u": 6}', () => assert.deepEqual(query('$.o[?@.u || @.x]', doc), [{ u: 6 }]));
  it('$.a[?@.b == $.x] selects the six numbers (absent equals absent)', () => assert.deepEqual(query('$.a[?@.b == $.x]', doc), [3, 5, 1, 2, 4, 6]));
  it('$.a[?@ == @] selects every element', () => assert.deepEqual(query('$.a[?@ == @]', doc), doc.a));
});

describe(`jsonpath: ${RFC('§2.3.5.3 Table 11')} comparison examples (from memory), each as a filter on the root`, () => {
  // A filter whose comparison does not use @ selects every child of the root when true, none when false.
  const doc = { obj: { x: 'y' }, arr: [2, 3] };
  const table: [string, boolean][] = [
    ['$.absent1 == $.absent2', true], ['$.absent1 <= $.absent2', true], ["$.absent == 'g'", false], ['$.absent1 != $.absent2', false],
    ["$.absent != 'g'", true], ['1 <= 2', true], ['1 > 2', false], ["13 == '13'", false], ["'a' <= 'b'", true], ["'a' > 'b'", false],
    ['$.obj == $.arr', false], ['$.obj != $.arr', true], ['$.obj == $.obj', true], ['$.obj != $.obj', false], ['$.arr == $.arr', true],
    ['$.arr != $.arr', false], ['$.obj == 17', false], ['$.obj != 17', true], ['$.obj <= $.arr', false], ['$.obj < $.arr', false],
    ['$.obj <= $.obj', true], ['$.arr <= $.arr', true], ['1 <= $.arr', false], ['1 >= $.arr', false], ['1 > $.arr', false],
    ['1 < $.arr', false], ['true <= true', true], ['true > true', false],
  ];
  for (const [comparison, result] of table) {
    it(`${comparison} is ${result}`, () => {
      assert.equal(query(`$[?${comparison}]`, doc).length, result ? 2 : 0);
    });
  }
});

describe(`jsonpath: ${RFC('§2.5.1.3')} child segment examples`, () => {
  const doc = ['a', 'b', 'c', 'd', 'e', 'f', 'g'];
  it('$[0, 3] selects a, d', () => assert.deepEqual(query('$[0, 3]', doc), ['a', 'd']));
  it('$[0:2, 5] selects a, b, f', () => assert.deepEqual(query('$[0:2, 5]', doc), ['a', 'b', 'f']));
  it('$[0, 0] selects a twice', () => assert.deepEqual(query('$[0, 0]', doc), ['a', 'a']));
});

describe(`jsonpath: ${RFC('§2.5.2.3')} descendant segment examples`, () => {
  const doc = { o: { j: 1, k: 2 }, a: [5, 3, [{ j: 4 }, { k: 6 }]] };
  it('$..j selects 1 and 4', () => assert.deepEqual(sorted(query('$..j', doc)), ['1', '4']));
  it('$..[0] selects 5 and {"j": 4}', () => assert.deepEqual(query('$..[0]', doc), [5, { j: 4 }]));
  it('$..[*] and $..* select the same eleven nodes', () => {
    const expected = sorted([doc.o, doc.a, 1, 2, 5, 3, doc.a[2], { j: 4 }, { k: 6 }, 4, 6]);
    assert.deepEqual(sorted(query('$..[*]', doc)), expected);
    assert.deepEqual(sorted(query('$..*', doc)), expected);
  });
  it('$..o selects {"j": 1, "k": 2}', () => assert.deepEqual(query('$..o', doc), [{ j: 1, k: 2 }]));
  it('$.o..[*, *] selects 1, 2 twice', () => assert.deepEqual(sorted(query('$.o..[*, *]', doc)), ['1', '1', '2', '2']));
  it('$.a..[0, 1] selects 5, 3, {"j": 4}, {"k": 6}', () => assert.deepEqual(query('$.a..[0, 1]', doc), [5, 3, { j: 4 }, { k: 6 }]));
});

describe(`jsonpath: ${RFC('§2.6.1')} null semantics examples`, () => {
  const doc = { a: null, b: [null], c: [{}], null: 1 };
  it('$.a selects null; $.a[0] and $.a.d select nothing', () => {
    assert.deepEqual(query('$.a', doc), [null]);
    assert.deepEqual(query('$.a[0]', doc), []);
    assert.deepEqual(query('$.a.d', doc), []);
  });
  it('$.b[0], $.b[*], $.b[?@] and $.b[?@==null] select null', () => {
    for (const q of ['$.b[0]', '$.b[*]', '$.b[?@]', '$.b[?@==null]']) assert.deepEqual(query(q, doc), [null], q);
  });
  it('$.c[?@.d==null] selects nothing; $.null selects 1', () => {
    assert.deepEqual(query('$.c[?@.d==null]', doc), []);
    assert.deepEqual(query('$.null', doc), [1]);
  });
});

describe(`jsonpath: ${RFC('§2.4.9 Table 14')} well-typedness of function expressions`, () => {
  const wellTyped = ['$[?length(@) < 3]', '$[?count(@.*) == 1]', "$[?match(@.timezone, 'Europe/.*')]", '$[?value(@..color) == "red"]'];
  const illTyped = ['$[?length(@.*) < 3]', '$[?count(1) == 1]', "$[?match(@.timezone, 'Europe/.*') == true]", '$[?value(@..color)]'];
  for (const expression of wellTyped) it(`${expression} is accepted`, () => assert.equal(compileSelector(expression).ok, true));
  // The RFC library parses these without checking function types; compileSelector adds the RFC's
  // type check on top of the library's parse.
  for (const expression of illTyped) it(`${expression} is refused with a message naming it (not well-typed)`, () => {
    const compiled = compileSelector(expression);
    assert.equal(compiled.ok, false);
    if (!compiled.ok) assert.ok(compiled.error.includes(expression));
  });
});

describe(`jsonpath: ${RFC('§2.4.4')} function names`, () => {
  it('an unknown function extension ($[?foo(@)]) is refused', () => {
    assert.equal(compileSelector('$[?foo(@)]').ok, false);
  });
});

describe(`jsonpath: ${RFC('§2.1')} syntax the RFC refuses`, () => {
  for (const expression of ['', 'store.book', '$.', '$[', "$['a'", '$.store[', '$..', '$[1:2:0', '$[?@.a = 1]', '$[01]', ' $.a', '$.a ']) {
    it(`${JSON.stringify(expression)} is not a query`, () => {
      const compiled = compileSelector(expression);
      assert.equal(compiled.ok, false);
    });
  }
});

describe('jsonpath: the fast walker agrees with the RFC library', () => {
  it('plain chains are compiled for the walker, and only they', () => {
    assert.ok(valueOf(compileSelector('$.vms[*].volumes[0]')).steps);
    assert.deepEqual(valueOf(compileSelector("$['tuning'].l2")).memberChain, ['tuning', 'l2']);
    assert.equal(valueOf(compileSelector('$.vms[*]')).memberChain, undefined);
    for (const e of ['$..a', '$[0,1]', '$[1:]', '$[?@.a]']) assert.equal(valueOf(compileSelector(e)).steps, undefined, e);
  });
  it('property: on generated JSON values, every generated plain chain selects what the library selects, in order', () => {
    const key = fc.constantFrom('a', 'b', 'vms', 'x y', "it's", '0', '~/', 'tab\there', 'back\\slash', '\u0001');
    const step = fc.oneof(
      key.map((k) => (/^[a-z]+$/.test(k) ? `.${k}` : `[${JSON.stringify(k)}]`)),
      fc.integer({ min: -3, max: 3 }).map((i) => `[${i}]`),
      fc.constant('[*]'),
      fc.constant('.*'),
    );
    const value = fc.letrec((tie) => ({
      node: fc.oneof({ depthSize: 'small' }, fc.jsonValue({ maxDepth: 1 }), fc.array(tie('node'), { maxLength: 4 }), fc.dictionary(key, tie('node'), { maxKeys: 4 })),
    })).node;
    fc.assert(fc.property(value, fc.array(step, { minLength: 1, maxLength: 4 }), (root, steps) => {
      const expression = `$${steps.join('')}`;
      const selector = valueOf(compileSelector(expression));
      assert.ok(selector.steps, expression);
      const reference: { value: unknown; path: PathSegment[] }[] = [];
      // The library reports member names escaped as in a normalized path (RFC 9535 §2.7); unescape them.
      exec(root as JsonValue, expression, (v, p) => reference.push({ value: v, path: p.map((s) => (typeof s === 'string' ? unescapeNormalized(s) : s)) }));
      assert.deepEqual(select(selector, root), reference, expression);
    }), { numRuns: 500 });
  });
});

describe('jsonpath: paths of nodes selected by the library', () => {
  // A path is a list of raw member names and indices (what a JSON Pointer is built from), whichever
  // evaluator selected the node: the fast walker and the library must agree for every key.
  const doc = { "it's": { 'back\\slash': 1 }, plain: 2 };
  it(`member names with ' and \\ come back raw from descendant and filter queries`, () => {
    assert.deepEqual(paths("$..['back\\\\slash']", doc), [["it's", 'back\\slash']]);
    assert.deepEqual(paths('$[?@.*]', doc), [["it's"]]);
  });
  it('so the JSON Pointer of such a node is the RFC 6901 one', () => {
    const [path] = paths("$..['back\\\\slash']", doc);
    assert.equal(toJsonPointer(path ?? []), "/it's/back\\slash");
  });
});

describe(`jsonpath: ${RFC6901} JSON Pointers`, () => {
  it('§5 examples: "" is the whole document, /foo/0, /a~1b, /m~0n', () => {
    assert.equal(toJsonPointer([]), '');
    assert.equal(toJsonPointer(['foo', 0]), '/foo/0');
    assert.equal(toJsonPointer(['a/b']), '/a~1b');
    assert.equal(toJsonPointer(['m~n']), '/m~0n');
    assert.equal(toJsonPointer([' ']), '/ ');
    assert.equal(toJsonPointer(['']), '/');
  });
  it('§4: ~01 reads as ~1 (decode ~1 first, then ~0)', () => {
    assert.deepEqual(valueOf(parseJsonPointer('/~01')), ['~1']);
    assert.deepEqual(valueOf(parseJsonPointer('/a~1b/m~0n')), ['a/b', 'm~n']);
  });
  it('a pointer that does not start with "/" is refused', () => {
    const parsed = parseJsonPointer('vms/0');
    assert.equal(parsed.ok, false);
  });
  it('property: parse(toJsonPointer(path)) gives the path back, as strings', () => {
    fc.assert(fc.property(fc.array(fc.oneof(fc.string(), fc.nat())), (path) => {
      assert.deepEqual(valueOf(parseJsonPointer(toJsonPointer(path))), path.map(String));
    }));
  });
});

// The project's own lint rules (plugin "emberlot"), used by eslint.config.mjs.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

/** The modules whose exported types are contracts: the MQTT payloads and commands, the API's
 * request and response types, and the server's in-process telemetry contracts. */
export const CONTRACT_MODULE_DIRS = ['shared/mqtt', 'shared/schemas'];
export const CONTRACT_MODULE_FILES = ['server/modules/telemetry/contracts.ts'];
/** Exported from a contract module but not data: RigLink is the link's service interface (what it
 * does, not what it carries); reading services back from ctx.services is the composition root's job. */
const NOT_DATA = new Set(['RigLink']);

/** Every `export type X` / `export interface X` name declared in the contract modules. */
export function contractTypeNames(root) {
  const files = [
    ...CONTRACT_MODULE_DIRS.flatMap((dir) =>
      readdirSync(join(root, dir))
        .filter((f) => f.endsWith('.ts'))
        .map((f) => join(root, dir, f)),
    ),
    ...CONTRACT_MODULE_FILES.map((f) => join(root, f)),
  ];
  const names = new Set();
  for (const file of files) {
    for (const m of readFileSync(file, 'utf8').matchAll(/^export\s+(?:type|interface)\s+([A-Za-z_$][\w$]*)/gm)) names.add(m[1]);
  }
  return [...names].filter((n) => !NOT_DATA.has(n)).sort();
}

/**
 * The contract-shaped parts of an asserted type: `Foo`, `Foo['field']`, `Foo[]`, `Array<Foo>`,
 * `Foo | null`, `{ tile: Foo }`. Not `keyof Foo` (a key, not contract data) nor other generics'
 * arguments (`z.ZodType<Foo>` is a schema, not data).
 */
function assertedTypeNames(typeNode) {
  const found = [];
  const visit = (node) => {
    if (!node) return;
    switch (node.type) {
      case 'TSTypeReference': {
        const name = node.typeName.type === 'Identifier' ? node.typeName.name : node.typeName.right?.name;
        const args = node.typeArguments?.params ?? [];
        if ((name === 'Array' || name === 'ReadonlyArray') && args.length) args.forEach(visit);
        else if (name) found.push({ name, node });
        break;
      }
      case 'TSArrayType':
        visit(node.elementType);
        break;
      case 'TSTypeOperator':
        if (node.operator === 'readonly') visit(node.typeAnnotation);
        break;
      case 'TSIndexedAccessType':
        visit(node.objectType);
        break;
      case 'TSUnionType':
      case 'TSIntersectionType':
        node.types.forEach(visit);
        break;
      case 'TSTupleType':
        node.elementTypes.forEach(visit);
        break;
      case 'TSTypeLiteral':
        for (const m of node.members) if (m.type === 'TSPropertySignature') visit(m.typeAnnotation?.typeAnnotation);
        break;
      default:
        break;
    }
  };
  visit(typeNode);
  return found;
}

const noContractCast = {
  meta: {
    type: 'problem',
    docs: { description: 'forbid a type assertion to a contract type (MQTT payloads/commands, API request/response types)' },
    schema: [{ type: 'object', properties: { types: { type: 'array', items: { type: 'string' } } }, additionalProperties: false }],
    messages: {
      cast:
        '`as {{name}}` switches off the check the contract exists for. Annotate the variable (`const x: {{name}} = …`), ' +
        'use `satisfies {{name}}`, or parse the data with its schema.',
    },
  },
  create(context) {
    const types = new Set(context.options[0]?.types ?? []);
    const check = (node) => {
      for (const ref of assertedTypeNames(node.typeAnnotation)) {
        if (types.has(ref.name)) context.report({ node: ref.node, messageId: 'cast', data: { name: ref.name } });
      }
    };
    return { TSAsExpression: check, TSTypeAssertion: check };
  },
};

const THROWING_QUERY = /^(get|find)(All)?By/;
const UNFAILABLE = new Set(['toBeTruthy', 'toBeDefined']);
const UNFAILABLE_NOT = new Set(['toBeNull', 'toBeUndefined', 'toBeFalsy']);

function calleeName(call) {
  const c = call.callee;
  if (c.type === 'Identifier') return c.name;
  if (c.type === 'MemberExpression' && c.property.type === 'Identifier') return c.property.name;
  return undefined;
}

const noUnfailableGetBy = {
  meta: {
    type: 'problem',
    docs: { description: 'forbid expect(getBy…(…)).toBeTruthy() and the like: getBy/findBy throw first, so the assertion cannot fail' },
    schema: [],
    messages: {
      unfailable:
        '`expect({{query}}(…)).{{matcher}}()` cannot fail: {{query}} throws before the assertion runs. ' +
        'Use `.toBeOnTheScreen()`, compare text/props/values, or `queryBy…` with an assertion that can fail.',
    },
  },
  create(context) {
    return {
      CallExpression(node) {
        // expect(x).toBeTruthy()  or  expect(x).not.toBeNull()
        const callee = node.callee;
        if (callee.type !== 'MemberExpression' || callee.property.type !== 'Identifier') return;
        const matcher = callee.property.name;
        let target = callee.object;
        let negated = false;
        if (target.type === 'MemberExpression' && target.property.type === 'Identifier' && target.property.name === 'not') {
          negated = true;
          target = target.object;
        }
        if (negated ? !UNFAILABLE_NOT.has(matcher) : !UNFAILABLE.has(matcher)) return;
        if (target.type !== 'CallExpression' || target.callee.type !== 'Identifier' || target.callee.name !== 'expect') return;
        let arg = target.arguments[0];
        if (arg?.type === 'AwaitExpression') arg = arg.argument;
        if (arg?.type !== 'CallExpression') return;
        const query = calleeName(arg);
        if (!query || !THROWING_QUERY.test(query)) return;
        context.report({ node, messageId: 'unfailable', data: { query, matcher: negated ? `not.${matcher}` : matcher } });
      },
    };
  },
};

export const emberlot = {
  meta: { name: 'emberlot' },
  rules: { 'no-contract-cast': noContractCast, 'no-unfailable-getby': noUnfailableGetBy },
};

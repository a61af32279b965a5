// Signs that a built chunk carries React's development build (a client built with NODE_ENV=development):
// the development JSX runtime and warnings only the development builds of React and React DOM contain.
const markers = [
  { name: 'the development JSX runtime (jsxDEV)', pattern: /\bjsxDEV\b/ },
  { name: "React's development warnings", pattern: /Each child in a list should have a unique/ },
  { name: "React DOM's development build", pattern: /Download the React DevTools/ },
];

/** The names of the development-build markers found in a chunk's text; empty for a production chunk. */
export function developmentMarkers(source) {
  return markers.filter((m) => m.pattern.test(source)).map((m) => m.name);
}

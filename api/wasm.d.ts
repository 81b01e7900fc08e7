// wrangler bundles imported .wasm files as compiled modules (its default module rules).
declare module '*.wasm' {
  const module: WebAssembly.Module;
  export default module;
}

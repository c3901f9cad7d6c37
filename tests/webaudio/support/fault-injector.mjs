// Fault injection for the real audio engine (node-web-audio-api), loaded into the AudioWorklet global
// scope BEFORE the package's processor module: it wraps `registerProcessor` so every processor class
// registered afterwards is a subclass that obeys one extra port message, and otherwise runs the real
// processor unchanged.
//   { type: 'test-fault', kind: 'generator', atFrame }  — from that frame, the quadrature processor's
//     generator throws once inside process(): the processor's own catch (silence, a counter, a
//     'fault' message) is what runs.
//   { type: 'test-fault', kind: 'uncaught', atFrame }   — from that frame, process() throws outside
//     the processor's code: the engine stops the processor and fires 'processorerror' on its node.
// Test-only; never shipped.
const register = globalThis.registerProcessor;
globalThis.registerProcessor = (name, Base) =>
  register(
    name,
    class extends Base {
      constructor(options) {
        super(options);
        this.testFault = null;
        const real = this.port.onmessage;
        this.port.onmessage = (ev) => {
          if (ev.data && ev.data.type === 'test-fault') this.testFault = ev.data;
          else if (real) real.call(this.port, ev);
        };
      }
      process(inputs, outputs, parameters) {
        const f = this.testFault;
        if (f && globalThis.currentFrame >= f.atFrame) {
          this.testFault = null;
          if (f.kind === 'uncaught') throw new Error('injected uncaught fault');
          const gen = this.gen;
          const own = Object.getOwnPropertyDescriptor(gen, 'process');
          gen.process = () => {
            if (own) Object.defineProperty(gen, 'process', own);
            else delete gen.process;
            throw new Error('injected generator fault');
          };
        }
        return super.process(inputs, outputs, parameters);
      }
    },
  );

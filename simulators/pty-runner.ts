/**
 * `npm run sim`: the simulated pressure calibrator, current meter and HART transmitter on pseudo-terminals, so real
 * serial code (Stillpoint with `BENCH=serial`, or a terminal program) can open them.
 * Options: `--dir <path>` for the pty links (default a temporary directory).
 */
import { SIMCAL_PROFILE } from '../shared/protocol';
import { SOCAT_MISSING, findSocat, startPtySim } from './pty-sim';

async function main(): Promise<void> {
  if (!(await findSocat())) {
    console.error(SOCAT_MISSING);
    process.exitCode = 1;
    return;
  }
  const dirFlag = process.argv.indexOf('--dir');
  const dir = dirFlag >= 0 ? process.argv[dirFlag + 1] : undefined;
  const sim = await startPtySim(dir ? { dir } : {});
  sim.rig.apply({ setpoint: { value: 0 } });
  console.log('Stillpoint simulated instruments are running. Open:');
  console.log(`  pressure calibrator  ${sim.hostPaths.pressure}  (9600 baud, ${JSON.stringify(SIMCAL_PROFILE.lineEnding)}; "${SIMCAL_PROFILE.queryCommand}" → "DP <value> ${sim.rig.unit}")`);
  console.log(`  current meter (SCPI) ${sim.hostPaths.current}  (9600 baud, "\\n"; *IDN?, CONF:CURR:DC, READ?)`);
  const tag = sim.rig.hart.state.config.tag;
  console.log(`  hart                 ${sim.hostPaths.hart}  (1200 bit/s 8O1; HART transmitter ${tag}, polling address 0; commands 0–3, 13, 15, 38, 40, 43, 45, 46)`);
  console.log('Press Ctrl+C to stop.');
  let stopping = false;
  const shutdown = (): void => {
    if (stopping) return;
    stopping = true;
    sim.stop().then(
      () => process.exit(0),
      (error: unknown) => {
        console.error(error);
        process.exit(1);
      },
    );
  };
  process.on('SIGINT', shutdown);
  process.on('SIGTERM', shutdown);
}

main().catch((error: unknown) => {
  console.error(error instanceof Error ? error.message : error);
  process.exitCode = 1;
});

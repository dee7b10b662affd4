import { defineDriverSuite, SUITE_RIG } from './serial-driver-suite';
import { SimRig } from '../../simulators/sim-rig';

defineDriverSuite('drivers over the simulator binding', async () => {
  const rig = new SimRig(SUITE_RIG);
  return { rig, binding: rig.binding, paths: rig.paths, teardown: async () => rig.dispose() };
});

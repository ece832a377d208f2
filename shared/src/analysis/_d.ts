import { generateWindow } from '../synthetic/index';
import { analyzeWindow } from './index';
const HR = [50, 65, 80, 95, 110, 125, 140], RR = [8, 12, 16, 20, 25, 30], PPV = [3, 8, 13, 18, 25];
let seed = 1000;
for (const hr of HR) for (const rr of RR) for (const ppv of PPV) { seed++;
  const pleth = seed % 3 === 0;
  const w = generateWindow({ seed, heartRate: hr, respiratoryRate: rr, ppv, channels: pleth ? ['abp', 'pleth', 'paw'] : ['abp', 'paw'] });
  const r = analyzeWindow({ channels: w.channels, context: { tidalVolumeMl: 600, patientHeightCm: 175, patientSex: 'male', ventilationMode: 'controlled', plethScaling: 'raw', probeSite: 'ear' } });
  if (hr/rr >= 4.5 && r.flags.length) {
    console.log(hr, rr, ppv, seed, r.flags.map(f=>f.code));
    for (const s of [r.beats.abp, r.beats.pleth]) if (s) for (const b of s.beats) if (!b.accepted) console.log(s.source, b.n, b.footTime.toFixed(3), b.peakTime.toFixed(3), b.ibi?.toFixed(3), b.rejectReasons);
  }
}

/**
 * Earlier, finished repairs on the demo amplifier's model, so a new install shows what model
 * history looks like. The makers, models, parts and figures are invented; the spellings of the
 * model differ on purpose, as they do when typed at the counter.
 */
import type { DbOrTx } from './client';
import type { DemoExtension } from './seed';
import { biasReadings, jobEvents, jobs, partsUsed, railChecks, units } from './schema/index';

const DAY = 86_400_000;

const EARLIER = [
  {
    model: 'SOLACE-70',
    serial: 'VS70-001877',
    daysAgo: 410,
    fault: 'Radio and disc heard together; faint crackle on every input.',
    found: 'Input selector switch IC leaking between inputs; replaced.',
    parts: [{ reference: 'IC301', partNumber: 'SEL-4066-D', description: 'input selector switch IC', unitCostMinor: 420 }],
    bias: { cold: 9.1, final: 14.8 },
  },
  {
    model: 'Solace70',
    serial: 'VS70-002310',
    daysAgo: 190,
    fault: 'Left channel drops out when warm.',
    found: 'Cracked solder joints on the left output relay; resoldered, relay replaced.',
    parts: [{ reference: 'RY701', partNumber: 'RLY-24-2C', description: 'speaker relay', unitCostMinor: 610 }],
    bias: { cold: 12.2, final: 15.1 },
  },
  {
    model: 'solace 70',
    serial: 'VS70-003391',
    daysAgo: 64,
    fault: 'Disc input noisy; tuner heard under it.',
    found: 'Input selector switch IC failing; replaced, contacts cleaned.',
    parts: [
      { reference: 'IC301', partNumber: 'SEL-4066-D', description: 'Input selector switch IC', unitCostMinor: 420 },
      { reference: 'C305', partNumber: 'CAP-47U-50', description: 'coupling capacitor 47 µF', unitCostMinor: 35 },
    ],
    bias: { cold: 10.4, final: 15.0 },
  },
] as const;

export const seedHistory: DemoExtension = async (tx: DbOrTx, ids) => {
  const shopId = ids.shopId;
  for (const [i, e] of EARLIER.entries()) {
    const customerId = ids.customerIds[(i + 1) % ids.customerIds.length]!;
    const at = new Date(Date.now() - e.daysAgo * DAY);
    const [unit] = await tx
      .insert(units)
      .values({ shopId, customerId, kind: 'integrated_amplifier', maker: 'Vellmark', model: e.model, serial: e.serial, createdAt: at })
      .returning({ id: units.id });
    const [job] = await tx
      .insert(jobs)
      .values({
        shopId,
        unitId: unit!.id,
        customerId,
        status: 'collected',
        reportedFault: e.fault,
        faultFound: e.found,
        assignedTechnicianId: ids.users.technician,
        createdAt: at,
        updatedAt: new Date(at.getTime() + 9 * DAY),
      })
      .returning({ id: jobs.id });
    const jobId = job!.id;
    const createdBy = ids.users.technician;
    await tx.insert(partsUsed).values(e.parts.map((p) => ({ ...p, shopId, jobId, quantity: 1, createdBy })));
    await tx.insert(railChecks).values([
      { shopId, jobId, rail: '+B main', nominalV: 42, measuredV: 41.6 - i * 0.3, tolerancePct: 5, createdBy },
      { shopId, jobId, rail: '−B main', nominalV: -42, measuredV: -41.8 + i * 0.2, tolerancePct: 5, createdBy },
    ]);
    await tx.insert(biasReadings).values({
      shopId,
      jobId,
      channel: 'L',
      testPoint: 'R712–R713',
      targetMv: 15,
      toleranceMv: 2,
      coldMv: e.bias.cold,
      warmUpMinutes: 30,
      warmMv: e.bias.final - 0.4,
      finalMv: e.bias.final,
      createdBy,
    });
    await tx.insert(jobEvents).values({ shopId, jobId, userId: createdBy, kind: 'note', note: `Soak test 2 h clean after the repair. ${e.found}`, at });
  }
};

import { lesionLabel, type StructureView } from '@emberline/shared';
import type { Structure } from './structure.entity';

/** A structure as the API shows it; its lesion, when it has one, must be loaded. */
export function toStructureView(structure: Structure): StructureView {
  const lesion = structure.lesion?.getEntity() ?? null;
  return {
    id: structure.id,
    seriesId: structure.series.id,
    labelValue: structure.labelValue,
    kind: structure.kind,
    name: structure.name,
    voxelCount: structure.voxelCount,
    volumeMl: structure.volumeMl,
    source: structure.source,
    lesionId: lesion?.id ?? null,
    lesionLabel: lesion ? lesionLabel(lesion) : null,
    isLesionConfirmed: structure.isLesionConfirmed,
  };
}

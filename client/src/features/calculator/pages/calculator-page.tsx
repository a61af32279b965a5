import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { mudPlugFormSchema, type MudPlugForm } from '@shared/schemas/calc.schema';
import { PageHeader } from '@client/components/ui/page';
import { useMe } from '@client/features/auth';
import { usePipelineChoices } from '../api/get-pipelines';
import { usePlugFigures } from '../hooks/use-plug-figures';
import { AtmosphereSection } from '../components/atmosphere-section';
import { LineFillSection } from '../components/line-fill-section';
import { MudPlugSection } from '../components/mud-plug-section';

export default function CalculatorPage() {
  const { data: me } = useMe();
  const metric = me?.activeTenant?.locationUnit === 'km';
  const pipelines = usePipelineChoices();
  const plugForm = useForm<MudPlugForm>({
    resolver: zodResolver(mudPlugFormSchema),
    mode: 'onChange',
    defaultValues: {
      diameterMode: 'nominal',
      pipelineId: '',
      nominalIn: '',
      nps: '',
      schedule: 'STD',
      measured: '',
      measuredUnit: metric ? 'mm' : 'in',
      ratio: '0.50',
      customWaterFraction: '',
    },
  });
  const figures = usePlugFigures(plugForm.control, pipelines.data?.items ?? []);

  return (
    <>
      <PageHeader
        title="Calculator"
        subtitle={`Mud plug, line fill and atmosphere check. Figures come from the Holdpoint server, the same as on permits${metric ? ', shown in metric units for this tenant' : ''}.`}
      />
      <div className="flex flex-col gap-4">
        <MudPlugSection form={plugForm} figures={figures} pipelines={pipelines} metric={metric} />
        <LineFillSection metric={metric} basis={figures.basis} />
        <AtmosphereSection />
      </div>
    </>
  );
}

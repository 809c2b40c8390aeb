import { useMemo, useState } from 'react';
import { View } from 'react-native';
import { checkSerialRows, splitPastedSerials } from '@/shared/domain/devices';
import { lotInputSchema, type LotDetail, type SerialRowProblem } from '@/shared/schemas/devices';
import { Columns } from '@/components/layout/Content';
import { describeError, isApiError } from '@/components/queries/api';
import { rowsFromError, useCreateLot, useParseSerialFile } from '@/components/queries/lots';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { Field } from '@/components/ui/Field';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { parseNum } from './format';
import { TraceabilityFields } from './TraceabilityFields';
import { CSV_HELP, FilePickButton, SERIAL_POLICY, SerialPreview, SerialProblems } from './SerialInputs';
import { countOf } from '@/shared/domain/format';

type Key = 'code' | 'quantity' | 'dateCode' | 'notes' | 'waferLot' | 'assemblyLot' | 'dieRevision';

interface Props {
  deviceTypeId: string;
  partNumber: string;
  onCreated: (lot: LotDetail) => void;
  onCancel: () => void;
}

/** Register a lot of a device type, with its serials typed/pasted or read from a CSV file. */
export function NewLotForm({ deviceTypeId, partNumber, onCreated, onCancel }: Props) {
  const create = useCreateLot();
  const parseFile = useParseSerialFile();
  const [code, setCode] = useState('');
  const [quantity, setQuantity] = useState('');
  const [dateCode, setDateCode] = useState('');
  const [notes, setNotes] = useState('');
  const [waferLot, setWaferLot] = useState('');
  const [assemblyLot, setAssemblyLot] = useState('');
  const [dieRevision, setDieRevision] = useState('');
  const [source, setSource] = useState<'paste' | 'file'>('paste');
  const [pasted, setPasted] = useState('');
  const [file, setFile] = useState<{ name: string; serials: string[]; rows: SerialRowProblem[] } | null>(null);
  const [errors, setErrors] = useState<Partial<Record<Key, string>>>({});

  const pastedSerials = useMemo(() => splitPastedSerials(pasted), [pasted]);
  const pastedProblems = useMemo(() => checkSerialRows(pastedSerials, new Set()).problems, [pastedSerials]);
  const serials = source === 'paste' ? pastedSerials : (file?.serials ?? []);
  const localProblems = source === 'paste' ? pastedProblems : (file?.rows ?? []);
  const serverRows = rowsFromError(create.error, serials);

  const submit = () => {
    const parsed = lotInputSchema.safeParse({
      code,
      deviceTypeId,
      quantity: parseNum(quantity),
      dateCode,
      notes,
      waferLot,
      assemblyLot,
      dieRevision,
      serials,
    });
    if (!parsed.success) {
      const next: Partial<Record<Key, string>> = {};
      for (const i of parsed.error.issues) {
        const k = i.path[0] as Key;
        if (!next[k]) next[k] = k === 'quantity' ? 'Enter the number of devices in the lot (a whole number)' : i.message;
      }
      setErrors(next);
      return;
    }
    setErrors({});
    create.mutate(parsed.data, {
      onSuccess: onCreated,
      onError: (e) => {
        if (isApiError(e) && e.fields) setErrors(e.fieldErrors() as Partial<Record<Key, string>>);
      },
    });
  };

  const generalError =
    create.error && serverRows.length === 0 && !(isApiError(create.error) && create.error.code === 'bad_request' && create.error.fields);

  return (
    <Card
      title={`Register a lot of ${partNumber}`}
      description="The lot size is what the traveller says; serials are the devices pulled for stress (you can add more later)."
      testID="new-lot-form"
    >
      {generalError ? (
        <Banner tone="danger" title="Lot not registered">
          {describeError(create.error)}
        </Banner>
      ) : null}
      <Columns>
        <Field
          label="Lot code"
          value={code}
          onChangeText={setCode}
          error={errors.code}
          autoCapitalize="characters"
          placeholder="HG2614-J"
          testID="lot-code"
        />
        <Field
          label="Lot size (devices)"
          value={quantity}
          onChangeText={setQuantity}
          error={errors.quantity}
          keyboardType="number-pad"
          inputMode="numeric"
          testID="lot-quantity"
        />
      </Columns>
      <Columns>
        <Field
          label="Date code"
          value={dateCode}
          onChangeText={setDateCode}
          error={errors.dateCode}
          help="Year and week, as marked on the parts (e.g. 2614)."
        />
        <Field
          label="Notes"
          value={notes}
          onChangeText={setNotes}
          error={errors.notes}
          help="Line, process change, anything else that explains drift later."
        />
      </Columns>
      <TraceabilityFields
        values={{ waferLot, assemblyLot, dieRevision }}
        onChange={{ waferLot: setWaferLot, assemblyLot: setAssemblyLot, dieRevision: setDieRevision }}
        errors={errors}
      />
      <SegmentedChoice
        label="Serials"
        options={[
          { value: 'paste', label: 'Type or paste' },
          { value: 'file', label: 'CSV file' },
        ]}
        value={source}
        onChange={setSource}
        help={SERIAL_POLICY}
      />
      {source === 'paste' ? (
        <View style={{ gap: space.xs }}>
          <Field
            label="Serials"
            value={pasted}
            onChangeText={setPasted}
            multiline
            numberOfLines={6}
            help="One per line, or separated by commas, semicolons or tabs (a column pasted from a spreadsheet works). Optional: you can add serials later."
            autoCapitalize="characters"
            autoCorrect={false}
            testID="lot-serials"
          />
          <SerialPreview serials={pastedSerials} />
          <SerialProblems rows={pastedProblems} where="list" title="Fix these rows before registering" />
        </View>
      ) : (
        <View style={{ gap: space.xs }}>
          <FilePickButton
            label={file ? `Choose another file (now: ${file.name})` : 'Choose a CSV file'}
            busy={parseFile.isPending}
            onPick={(f) =>
              parseFile.mutate(f, {
                onSuccess: (r) => setFile({ name: f.name, serials: r.serials, rows: r.rows }),
                onError: () => setFile(null),
              })
            }
            testID="lot-file"
          />
          <Text variant="caption" tone="subtle">
            {CSV_HELP}
          </Text>
          {parseFile.isError ? (
            <Banner tone="danger" title="The file could not be read">
              {describeError(parseFile.error)}
            </Banner>
          ) : null}
          {file ? <SerialPreview serials={file.serials} /> : null}
          {file ? <SerialProblems rows={file.rows} where="file" title="Fix these lines in the file, then choose it again" /> : null}
        </View>
      )}
      {serverRows.length ? <SerialProblems rows={serverRows} where="list" /> : null}
      <View style={{ flexDirection: 'row', gap: space.xs, flexWrap: 'wrap' }}>
        <Button
          label={serials.length ? `Register lot with ${countOf(serials.length, 'serial')}` : 'Register lot'}
          variant="primary"
          onPress={submit}
          busy={create.isPending}
          busyLabel="Registering…"
          disabled={localProblems.length > 0}
          testID="lot-submit"
        />
        <Button label="Cancel" variant="quiet" onPress={onCancel} disabled={create.isPending} />
      </View>
    </Card>
  );
}

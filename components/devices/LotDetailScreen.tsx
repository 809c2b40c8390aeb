import { router, useLocalSearchParams, type Href } from 'expo-router';
import { useMemo, useState } from 'react';
import { View } from 'react-native';
import { checkSerialRows, splitPastedSerials } from '@/shared/domain/devices';
import type { LotDetail } from '@/shared/schemas/devices';
import { formatDateTime } from '@/components/common/format';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { rowsFromError, useAddSerials, useLot, useUploadSerials } from '@/components/queries/lots';
import { space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { Text } from '@/components/ui/Text';
import { deviceHref } from './links';
import { LotDownloads } from '@/components/trends/LotDownloads';
import { LotTraceabilityCard } from './LotTraceabilityCard';
import { CSV_HELP, FilePickButton, SERIAL_POLICY, SerialGrid, SerialPreview, SerialProblems } from './SerialInputs';
import { countOf } from '@/shared/domain/format';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A lot: its size, date code and notes, the serials registered, and (for engineers) adding more. */
export function LotDetailScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const valid = typeof id === 'string' && UUID.test(id);
  const lot = useLot(valid ? id : undefined);
  const canWrite = useCan()('lot.edit');
  const [filter, setFilter] = useState('');

  if (!valid) {
    return (
      <Screen>
        <EmptyState
          title="No such lot"
          message="The address does not name a lot."
          action={<Button label="Devices & lots" onPress={() => router.replace('/devices' as Href)} />}
        />
      </Screen>
    );
  }

  return (
    <Screen width="wide" testID="lot-screen">
      <QueryState query={lot} loadingLabel="Loading the lot…" errorTitle="Could not load this lot">
        {(l) => {
          const shown = filter.trim() ? l.serials.filter((s) => s.serial.toLowerCase().includes(filter.trim().toLowerCase())) : l.serials;
          return (
            <>
              <Header
                eyebrow={`Lot of ${l.partNumber}`}
                title={l.code}
                subtitle={`${l.quantity.toLocaleString('en-GB')} devices in the lot · ${l.deviceCount.toLocaleString('en-GB')} serials registered${l.dateCode ? ` · date code ${l.dateCode}` : ''}`}
                actions={
                  <Button label={`Back to ${l.partNumber}`} variant="quiet" onPress={() => router.push(deviceHref(l.deviceTypeId))} />
                }
              />
              {l.notes ? (
                <Banner tone="info" title="Notes">
                  {l.notes}
                </Banner>
              ) : null}
              <LotTraceabilityCard lot={l} canWrite={canWrite} />
              <LotDownloads lotId={l.id} lotCode={l.code} />
              {canWrite ? <AddSerials lot={l} /> : null}
              <Card
                title="Serials"
                description={`Registered ${formatDateTime(l.createdAt)}. Sorted by serial. Open a serial for the device's whole history.`}
              >
                {l.serials.length === 0 ? (
                  <EmptyState
                    title="No serials yet"
                    message={canWrite ? 'Add the serials of the devices pulled for stress above.' : 'An engineer registers the serials.'}
                  />
                ) : (
                  <View style={{ gap: space.sm }}>
                    <Field label="Find a serial" value={filter} onChangeText={setFilter} autoCapitalize="characters" autoCorrect={false} />
                    <Text variant="caption" tone="muted">
                      Showing {shown.length.toLocaleString('en-GB')} of {l.serials.length.toLocaleString('en-GB')}
                    </Text>
                    <SerialGrid serials={shown.slice(0, 2000)} />
                  </View>
                )}
              </Card>
            </>
          );
        }}
      </QueryState>
    </Screen>
  );
}

function AddSerials({ lot }: { lot: LotDetail }) {
  const add = useAddSerials(lot.id);
  const upload = useUploadSerials(lot.id);
  const [source, setSource] = useState<'paste' | 'file'>('paste');
  const [pasted, setPasted] = useState('');
  const [notice, setNotice] = useState<string | null>(null);
  const [lastFile, setLastFile] = useState<string | null>(null);
  const serials = useMemo(() => splitPastedSerials(pasted), [pasted]);
  const existing = useMemo(() => new Set(lot.serials.map((s) => s.serial)), [lot.serials]);
  const localProblems = useMemo(
    () => checkSerialRows(serials, existing, undefined, `lot ${lot.code}`).problems,
    [serials, existing, lot.code],
  );
  const pasteRows = rowsFromError(add.error, serials);
  const fileRows = rowsFromError(upload.error);

  return (
    <Card title="Add serials" description={SERIAL_POLICY} testID="add-serials">
      {notice ? <Banner tone="ok">{notice}</Banner> : null}
      <SegmentedChoice
        label="From"
        options={[
          { value: 'paste', label: 'Type or paste' },
          { value: 'file', label: 'CSV file' },
        ]}
        value={source}
        onChange={(v) => {
          setSource(v);
          setNotice(null);
        }}
      />
      {source === 'paste' ? (
        <View style={{ gap: space.xs }}>
          <Field
            label="Serials to add"
            value={pasted}
            onChangeText={(v) => {
              setPasted(v);
              setNotice(null);
            }}
            multiline
            numberOfLines={5}
            autoCapitalize="characters"
            autoCorrect={false}
            help="One per line, or separated by commas, semicolons or tabs."
            testID="add-serials-text"
          />
          <SerialPreview serials={serials} />
          <SerialProblems rows={localProblems} where="list" title="Fix these rows before adding" />
          {add.isError && pasteRows.length === 0 ? <Banner tone="danger">{describeError(add.error)}</Banner> : null}
          <SerialProblems rows={pasteRows} where="list" />
          <Button
            label={serials.length ? `Add ${countOf(serials.length, 'serial')}` : 'Add serials'}
            variant="primary"
            disabled={serials.length === 0 || localProblems.length > 0}
            busy={add.isPending}
            busyLabel="Adding…"
            onPress={() =>
              add.mutate(
                { serials },
                {
                  onSuccess: (l) => {
                    setNotice(`${countOf(serials.length, 'serial')} added; the lot now has ${l.deviceCount}.`);
                    setPasted('');
                  },
                },
              )
            }
            testID="add-serials-submit"
          />
        </View>
      ) : (
        <View style={{ gap: space.xs }}>
          <Text variant="caption" tone="subtle">
            {CSV_HELP}
          </Text>
          <FilePickButton
            label="Choose a CSV file and upload"
            busy={upload.isPending}
            onPick={(f) => {
              setNotice(null);
              setLastFile(f.name);
              upload.mutate(f, {
                onSuccess: (l) => setNotice(`${f.name} uploaded: the lot now has ${l.deviceCount} serials.`),
              });
            }}
            testID="upload-serials"
          />
          {upload.isError && fileRows.length === 0 ? (
            <Banner tone="danger" title={lastFile ? `${lastFile} was not uploaded` : 'Not uploaded'}>
              {describeError(upload.error)}
            </Banner>
          ) : null}
          <SerialProblems
            rows={fileRows}
            where="file"
            title={lastFile ? `${lastFile}: ${countOf(fileRows.length, 'line')} to fix — nothing was stored` : undefined}
          />
        </View>
      )}
    </Card>
  );
}

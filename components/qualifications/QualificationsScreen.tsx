/**
 * Qualifications: every qualification with its status; engineers start a new one from a template
 * (AEC-Q101, JESD47, MIL-PRF-19500 group tests), choosing the device type(s) and the lots.
 */
import { router, type Href } from 'expo-router';
import { useMemo, useState } from 'react';
import { Pressable, View } from 'react-native';
import { Header } from '@/components/layout/Header';
import { Screen } from '@/components/layout/Screen';
import { ApiError, describeError } from '@/components/queries/api';
import { useCan } from '@/components/queries/auth';
import { useDeviceTypes } from '@/components/queries/device-types';
import { useLots } from '@/components/queries/lots';
import { useCreateQualification, useQualifications, useQualTemplates } from '@/components/queries/qualifications';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { Card } from '@/components/ui/Card';
import { EmptyState } from '@/components/ui/EmptyState';
import { Field } from '@/components/ui/Field';
import { QueryState } from '@/components/ui/QueryState';
import { SegmentedChoice } from '@/components/ui/SegmentedChoice';
import { StatusPill } from '@/components/ui/StatusPill';
import { Text } from '@/components/ui/Text';
import { CONFIRM_WORDS, FAMILY_RULE_MIN, QUAL_STATUS_LABEL, type QualTemplateKey } from '@/shared/qualification/words';
import { STATUS_TONE } from './labels';

function Chip({ label, selected, onPress, testID }: { label: string; selected: boolean; onPress: () => void; testID?: string }) {
  return (
    <Pressable
      accessibilityRole="checkbox"
      accessibilityState={{ checked: selected }}
      // react-native-web leaves aria-checked out for an unchecked box; a checkbox must always carry it.
      aria-checked={selected}
      onPress={onPress}
      testID={testID}
      style={{
        paddingHorizontal: space.sm,
        paddingVertical: space.xs,
        borderRadius: radius.md,
        borderWidth: 1,
        borderColor: selected ? colors.focus : colors.borderStrong,
        backgroundColor: selected ? colors.emberSoft : colors.surface,
      }}
    >
      <Text variant="label">{(selected ? '✓ ' : '') + label}</Text>
    </Pressable>
  );
}

function NewQualification() {
  const templates = useQualTemplates();
  const types = useDeviceTypes();
  const lots = useLots();
  const create = useCreateQualification();
  const [name, setName] = useState('');
  const [templateKey, setTemplateKey] = useState<QualTemplateKey | undefined>(undefined);
  const [typeIds, setTypeIds] = useState<string[]>([]);
  const [lotIds, setLotIds] = useState<string[]>([]);
  const [familyRule, setFamilyRule] = useState('');
  const toggle = (list: string[], id: string) => (list.includes(id) ? list.filter((x) => x !== id) : [...list, id]);
  const usableLots = useMemo(() => (lots.data ?? []).filter((l) => typeIds.includes(l.deviceTypeId)), [lots.data, typeIds]);
  const template = templates.data?.find((t) => t.key === templateKey);
  const fields = create.error instanceof ApiError ? create.error.fields : undefined;
  const family = typeIds.length > 1;
  const ready =
    name.trim().length >= 3 &&
    !!templateKey &&
    typeIds.length > 0 &&
    lotIds.length > 0 &&
    (!family || familyRule.trim().length >= FAMILY_RULE_MIN);

  return (
    <Card
      title="New qualification"
      description="A matrix of the template's stress groups × your lots. Runs of each group's kind on a lot fill its cell."
      testID="qual-new"
    >
      <View style={{ gap: space.md }}>
        <Field label="Name" value={name} onChangeText={setName} testID="qual-name" error={fields?.name?.[0]} />
        {templates.data ? (
          <SegmentedChoice
            label="Template"
            options={templates.data.map((t) => ({ value: t.key, label: t.name }))}
            value={templateKey}
            onChange={setTemplateKey}
          />
        ) : null}
        {template ? (
          <Text variant="caption" tone="muted" testID="qual-template-note">
            {template.standard}: {template.groups.length} groups. {template.sequence}{' '}
            {template.groups.some((g) => g.basis === 'memory') ? CONFIRM_WORDS : ''}
          </Text>
        ) : null}
        <View style={{ gap: space.xs }}>
          <Text variant="label">Device types</Text>
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
            {(types.data ?? []).map((t) => (
              <Chip
                key={t.id}
                label={t.partNumber}
                selected={typeIds.includes(t.id)}
                onPress={() => {
                  const next = toggle(typeIds, t.id);
                  setTypeIds(next);
                  setLotIds((ls) => ls.filter((id) => next.includes((lots.data ?? []).find((l) => l.id === id)?.deviceTypeId ?? '')));
                }}
                testID={`qual-type-${t.partNumber}`}
              />
            ))}
          </View>
        </View>
        {family ? (
          <Field
            label="Generic-data rule (family)"
            multiline
            value={familyRule}
            onChangeText={setFamilyRule}
            help={`Which data stands for which device type, and why (at least ${FAMILY_RULE_MIN} characters). Printed on the report.`}
            error={fields?.familyRule?.[0]}
            testID="qual-family-rule"
          />
        ) : null}
        <View style={{ gap: space.xs }}>
          <Text variant="label">Lots (in order: a group asking for N lots uses the first N)</Text>
          {typeIds.length === 0 ? (
            <Text variant="caption" tone="muted">
              Choose a device type first.
            </Text>
          ) : (
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
              {usableLots.map((l) => (
                <Chip
                  key={l.id}
                  label={lotIds.includes(l.id) ? `${lotIds.indexOf(l.id) + 1}. ${l.code}` : l.code}
                  selected={lotIds.includes(l.id)}
                  onPress={() => setLotIds(toggle(lotIds, l.id))}
                  testID={`qual-lot-${l.code}`}
                />
              ))}
            </View>
          )}
        </View>
        {create.isError ? <Banner tone="danger">{describeError(create.error)}</Banner> : null}
        <Button
          label="Create qualification"
          disabled={!ready}
          busy={create.isPending}
          onPress={() =>
            create.mutate(
              { name: name.trim(), templateKey: templateKey!, deviceTypeIds: typeIds, lotIds, familyRule: family ? familyRule.trim() : '' },
              { onSuccess: (d) => router.push(`/qualifications/${d.id}` as Href) },
            )
          }
          testID="qual-create"
        />
      </View>
    </Card>
  );
}

export function QualificationsScreen() {
  const can = useCan();
  const list = useQualifications();
  return (
    <Screen width="wide" testID="qualifications-screen">
      <Header
        eyebrow="Reliability"
        title="Qualifications"
        subtitle="A part is qualified when every stress group of its plan has passed on every lot it asks for."
      />
      <QueryState
        query={list}
        loadingLabel="Loading qualifications…"
        errorTitle="Could not load qualifications"
        isEmpty={(d) => d.length === 0}
        empty={<EmptyState title="No qualifications yet" message="An engineer starts one from a template of the public standards." />}
      >
        {(items) => (
          <View style={{ gap: space.sm }} testID="qual-list">
            {items.map((q) => (
              <Pressable
                key={q.id}
                onPress={() => router.push(`/qualifications/${q.id}` as Href)}
                accessibilityRole="link"
                testID={`qual-item-${q.code}`}
              >
                <Card
                  title={`${q.code} · ${q.name}`}
                  description={`${q.templateName} · ${q.deviceTypes.map((t) => t.partNumber).join(', ')} · lots ${q.lots.map((l) => l.code).join(', ')}`}
                >
                  <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center', flexWrap: 'wrap' }}>
                    <StatusPill tone={STATUS_TONE[q.status]} label={QUAL_STATUS_LABEL[q.status]} size="sm" />
                    <Text variant="caption" tone="muted">
                      {q.cellsDone} of {q.cellsTotal} cells done
                    </Text>
                  </View>
                </Card>
              </Pressable>
            ))}
          </View>
        )}
      </QueryState>
      {can('qualification.edit') ? <NewQualification /> : null}
    </Screen>
  );
}

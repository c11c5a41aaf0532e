//! Facts the rules share, computed once per analysis: for each layer its source and profile, and
//! for each binding the column's declaration, profile and the kind of the values it encodes, and,
//! when the front end evaluated the chart, what the layer draws.

use crate::data::{ColumnProfile, DataContext, DataProfile};
use crate::eval::{EvaluatedChart, EvaluatedLayer};
use crate::spec::model::*;

/// Where a binding's effective kind came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum KindOrigin {
    /// `columns.NAME.kind` in the spec.
    Declared,
    /// A `summary` produces numbers.
    Summary,
    /// `bins` turn numbers into ordered intervals.
    Bins,
    /// Inferred from the data profile.
    Data,
}

#[derive(Debug)]
pub struct BindingFacts<'a> {
    pub binding: &'a Binding,
    pub declaration: Option<&'a ColumnDeclaration>,
    /// The column's profile, when the data was read and has the column.
    pub profile: Option<&'a ColumnProfile>,
    /// The kind of the values drawn on the channel, when it can be told.
    pub kind: Option<AttributeKind>,
    pub kind_origin: Option<KindOrigin>,
    /// The kind of the column itself (declared, else inferred), before summaries and bins.
    pub column_kind: Option<AttributeKind>,
    /// Whether zero is meaningful for the column (declared, else inferred).
    pub zero: Option<ZeroMeaning>,
}

impl BindingFacts<'_> {
    pub fn column_name(&self) -> Option<&str> {
        self.binding
            .column
            .as_ref()
            .map(|column| column.value.as_str())
    }

    /// A name for messages: the column, or `count` for a bare count.
    pub fn display_name(&self) -> String {
        match (self.column_name(), self.binding.summary.as_ref()) {
            (Some(column), Some(summary)) => format!("{}({column})", summary.value.as_str()),
            (Some(column), None) => column.to_string(),
            (None, Some(summary)) => summary.value.as_str().to_string(),
            (None, None) => self.binding.channel.as_str().to_string(),
        }
    }

    /// The kind of the values on the channel in the words every surface uses: for a plain
    /// column the same phrase as the column's own ([`kind_phrase`]), for a summary or bins what
    /// they turn the column into.
    pub fn kind_phrase(&self) -> Option<String> {
        match self.kind_origin? {
            KindOrigin::Summary => {
                let summary = self.binding.summary.as_ref()?.value.as_str();
                Some(format!("quantitative (the `{summary}` of each group)"))
            }
            KindOrigin::Bins => {
                Some("ordered (`bins` turn the numbers into intervals)".to_string())
            }
            KindOrigin::Declared | KindOrigin::Data => kind_phrase(
                self.declaration
                    .and_then(|declaration| declaration.kind.as_ref())
                    .map(|kind| kind.value),
                self.profile.map(|profile| profile.kind),
            ),
        }
    }

    /// Values are numbers with a magnitude (quantitative, or a summary).
    pub fn is_magnitude(&self) -> bool {
        self.kind == Some(AttributeKind::Quantitative)
    }
}

/// A column's effective kind, said the same way in every hover: the declaration wins, and what
/// the data looks like is said beside it when the two differ, e.g. "ordered (declared; the data
/// looks categorical)".
pub fn kind_phrase(
    declared: Option<AttributeKind>,
    inferred: Option<AttributeKind>,
) -> Option<String> {
    Some(match (declared, inferred) {
        (Some(declared), Some(inferred)) if declared != inferred => format!(
            "{} (declared; the data looks {})",
            declared.as_str(),
            inferred.as_str()
        ),
        (Some(declared), _) => format!("{} (declared)", declared.as_str()),
        (None, Some(inferred)) => format!("{} (from the data)", inferred.as_str()),
        (None, None) => return None,
    })
}

#[derive(Debug)]
pub struct LayerFacts<'a> {
    pub layer: &'a Layer,
    pub source: Option<&'a Source>,
    /// The profile of the layer's data, when it was read.
    pub data: Option<&'a DataProfile>,
    /// The bindings the layer's mark can show (all of them while the mark is not known).
    pub bindings: Vec<BindingFacts<'a>>,
    /// Bindings on channels the mark cannot show (`angle` on a point): not drawn, so only
    /// `channel-not-on-mark` looks at them.
    pub unshown: Vec<BindingFacts<'a>>,
    /// What the layer draws, when the chart was evaluated (the marks with their values after
    /// summaries, bins and stacking); rules fall back to the profile without it.
    pub drawn: Option<&'a EvaluatedLayer>,
    /// The evaluation read only a sampled head of the data (messages say so).
    pub drawn_from_sample: bool,
}

impl<'a> LayerFacts<'a> {
    pub fn binding(&self, channel: Channel) -> Option<&BindingFacts<'a>> {
        self.bindings
            .iter()
            .find(|facts| facts.binding.channel == channel)
    }

    pub fn mark(&self) -> Option<Mark> {
        self.layer.mark.as_ref().map(|mark| mark.value)
    }

    /// The position channel that carries the value (the magnitude) of bars, areas and lines: the
    /// one with quantitative values; `y` when both or neither can be told.
    pub fn value_axis(&self) -> Option<Channel> {
        let x = self.binding(Channel::X);
        let y = self.binding(Channel::Y);
        match (x.map(|f| f.is_magnitude()), y.map(|f| f.is_magnitude())) {
            (Some(true), Some(false)) | (Some(true), None) => Some(Channel::X),
            (_, Some(_)) => Some(Channel::Y),
            (Some(false), None) => None,
            (None, None) => None,
        }
    }
}

/// Compute the facts of every layer.
pub fn layer_facts<'a>(spec: &'a ChartSpec, data: &'a DataContext) -> Vec<LayerFacts<'a>> {
    layer_facts_with_evaluation(spec, data, None)
}

/// Like [`layer_facts`], with each layer's evaluated marks from `evaluation` (matched by the
/// layer's index and mark, so an evaluation of another text is not misread).
pub fn layer_facts_with_evaluation<'a>(
    spec: &'a ChartSpec,
    data: &'a DataContext,
    evaluation: Option<&'a EvaluatedChart>,
) -> Vec<LayerFacts<'a>> {
    spec.layers
        .iter()
        .map(|layer| {
            let source = spec.source_for_layer(layer);
            let profile = source
                .and_then(|source| data.for_source(source))
                .and_then(|result| result.as_ref().ok())
                .map(|profile| profile.as_ref());
            let mark = layer.mark.as_ref().map(|mark| mark.value);
            let (bindings, unshown) = layer
                .bindings
                .iter()
                .map(|binding| binding_facts(spec, profile, binding))
                .partition(|facts| {
                    mark.is_none_or(|mark| {
                        crate::knowledge::perceived::mark_shows(mark, facts.binding.channel)
                    })
                });
            let drawn = evaluation.and_then(|chart| {
                chart.layers.iter().find(|evaluated| {
                    evaluated.index == layer.index && Some(evaluated.mark) == mark
                })
            });
            LayerFacts {
                layer,
                source,
                data: profile,
                bindings,
                unshown,
                drawn,
                drawn_from_sample: evaluation.is_some_and(|chart| chart.is_sample),
            }
        })
        .collect()
}

fn binding_facts<'a>(
    spec: &'a ChartSpec,
    data: Option<&'a DataProfile>,
    binding: &'a Binding,
) -> BindingFacts<'a> {
    let name = binding.column.as_ref().map(|column| column.value.as_str());
    let declaration = name.and_then(|name| spec.column_declaration(name));
    let profile = name.and_then(|name| data.and_then(|data| data.column(name)));
    let declared_kind = declaration
        .and_then(|d| d.kind.as_ref())
        .map(|kind| kind.value);
    let column_kind = declared_kind.or(profile.map(|profile| profile.kind));
    let (kind, kind_origin) = if binding.summary.is_some() {
        (Some(AttributeKind::Quantitative), Some(KindOrigin::Summary))
    } else if binding.bins.is_some() {
        (Some(AttributeKind::Ordered), Some(KindOrigin::Bins))
    } else if let Some(kind) = declared_kind {
        (Some(kind), Some(KindOrigin::Declared))
    } else if let Some(profile) = profile {
        (Some(profile.kind), Some(KindOrigin::Data))
    } else {
        (None, None)
    };
    let zero = declaration
        .and_then(|d| d.zero.as_ref())
        .map(|zero| zero.value)
        .or(profile.and_then(|profile| profile.zero));
    BindingFacts {
        binding,
        declaration,
        profile,
        kind,
        kind_origin,
        column_kind,
        zero,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_declared_kind_leads_and_the_data_is_said_beside_it() {
        use AttributeKind::*;
        assert_eq!(
            kind_phrase(Some(Ordered), Some(Categorical)).as_deref(),
            Some("ordered (declared; the data looks categorical)")
        );
        assert_eq!(
            kind_phrase(Some(Ordered), Some(Ordered)).as_deref(),
            Some("ordered (declared)")
        );
        assert_eq!(
            kind_phrase(None, Some(Time)).as_deref(),
            Some("time (from the data)")
        );
        assert_eq!(kind_phrase(None, None), None);
    }
}

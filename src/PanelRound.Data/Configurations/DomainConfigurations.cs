using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;
using PanelRound.Core.Domain;
using PanelRound.Data.Entities;

namespace PanelRound.Data.Configurations;

internal sealed class IndicatorConfiguration : IEntityTypeConfiguration<Indicator>
{
    public void Configure(EntityTypeBuilder<Indicator> b)
    {
        b.Property(x => x.Key).HasMaxLength(FieldLengths.IndicatorKey).IsRequired();
        b.HasIndex(x => x.Key).IsUnique();
        b.Property(x => x.Name).HasMaxLength(FieldLengths.Title).IsRequired();
        b.Property(x => x.UnitLabel).HasMaxLength(FieldLengths.UnitLabel).IsRequired();
        b.Property(x => x.Description).HasMaxLength(FieldLengths.Description);
        b.HasMany(x => x.Observations).WithOne(x => x.Indicator).HasForeignKey(x => x.IndicatorId).OnDelete(DeleteBehavior.Restrict);
    }
}

internal sealed class ObservationConfiguration : IEntityTypeConfiguration<Observation>
{
    public void Configure(EntityTypeBuilder<Observation> b)
    {
        b.Property(x => x.Period).HasMaxLength(FieldLengths.Period).IsRequired();
        b.Property(x => x.Source).HasMaxLength(FieldLengths.Source);
        b.Property(x => x.RecordedBy).HasMaxLength(FieldLengths.Actor);
        b.HasIndex(x => new { x.IndicatorId, x.PeriodSortKey, x.SupersededAt });
    }
}

internal sealed class PanelConfiguration : IEntityTypeConfiguration<Panel>
{
    public void Configure(EntityTypeBuilder<Panel> b)
    {
        b.Property(x => x.Title).HasMaxLength(FieldLengths.Title).IsRequired();
        b.Property(x => x.Brief).HasMaxLength(FieldLengths.Brief);
        b.Property(x => x.TargetPeriods).HasMaxLength(FieldLengths.TargetPeriods).IsRequired();
        b.Property(x => x.CreatedBy).HasMaxLength(FieldLengths.Actor);
        b.Property(x => x.ExternalKey).HasMaxLength(FieldLengths.ExternalKey);
        b.Property(x => x.TimeZone).HasMaxLength(FieldLengths.TimeZone).IsRequired().HasDefaultValue("UTC");
        b.Property(x => x.ContactName).HasMaxLength(FieldLengths.Name);
        b.Property(x => x.ContactEmail).HasMaxLength(FieldLengths.Email);
        b.HasIndex(x => x.ExternalKey).IsUnique();
        b.Property(x => x.Version).IsConcurrencyToken();
        b.ComplexProperty(x => x.Settings, s => s.Property(x => x.ExpertBenchmark).HasMaxLength(FieldLengths.BenchmarkKey));
        b.HasMany(x => x.Questions).WithOne(x => x.Panel).HasForeignKey(x => x.PanelId).OnDelete(DeleteBehavior.Cascade);
        b.HasMany(x => x.Rounds).WithOne(x => x.Panel).HasForeignKey(x => x.PanelId).OnDelete(DeleteBehavior.Cascade);
        b.HasMany(x => x.Memberships).WithOne(x => x.Panel).HasForeignKey(x => x.PanelId).OnDelete(DeleteBehavior.Cascade);
    }
}

internal sealed class QuestionConfiguration : IEntityTypeConfiguration<Question>
{
    public void Configure(EntityTypeBuilder<Question> b)
    {
        b.Property(x => x.Label).HasMaxLength(FieldLengths.Title).IsRequired();
        b.Property(x => x.HelpText).HasMaxLength(FieldLengths.Description);
        b.Property(x => x.TargetPeriods).HasMaxLength(FieldLengths.TargetPeriods).IsRequired();
        b.HasOne(x => x.Indicator).WithMany().HasForeignKey(x => x.IndicatorId).OnDelete(DeleteBehavior.Restrict);
    }
}

internal sealed class ExpertConfiguration : IEntityTypeConfiguration<Expert>
{
    public void Configure(EntityTypeBuilder<Expert> b)
    {
        b.Property(x => x.Name).HasMaxLength(FieldLengths.Name).IsRequired();
        b.Property(x => x.Email).HasMaxLength(FieldLengths.Email).IsRequired();
        b.HasIndex(x => x.Email).IsUnique();
        b.Property(x => x.Affiliation).HasMaxLength(FieldLengths.Affiliation);
        b.Property(x => x.Expertise).HasMaxLength(FieldLengths.Expertise);
        b.Property(x => x.DeclaredInterests).HasMaxLength(FieldLengths.DeclaredInterests);
        b.Property(x => x.ExternalKey).HasMaxLength(FieldLengths.ExternalKey);
        b.HasIndex(x => x.ExternalKey).IsUnique();
        b.HasMany(x => x.Memberships).WithOne(x => x.Expert).HasForeignKey(x => x.ExpertId).OnDelete(DeleteBehavior.Restrict);
    }
}

internal sealed class MembershipConfiguration : IEntityTypeConfiguration<PanelMembership>
{
    public void Configure(EntityTypeBuilder<PanelMembership> b)
    {
        b.ToTable("Memberships");
        b.Property(x => x.PanelCode).HasMaxLength(FieldLengths.PanelCode).IsRequired();
        b.HasIndex(x => x.PanelCode).IsUnique();
        b.Property(x => x.TokenHash).HasMaxLength(FieldLengths.Hash).IsRequired();
        b.HasIndex(x => x.TokenHash).IsUnique();
        b.HasIndex(x => new { x.PanelId, x.ExpertId }).IsUnique();
    }
}

internal sealed class RoundConfiguration : IEntityTypeConfiguration<Round>
{
    public void Configure(EntityTypeBuilder<Round> b)
    {
        b.HasIndex(x => new { x.PanelId, x.Number }).IsUnique();
        b.Property(x => x.ClosedBy).HasMaxLength(FieldLengths.Actor);
        b.Property(x => x.Version).IsConcurrencyToken();
        b.HasMany(x => x.Feedback).WithOne(x => x.Round).HasForeignKey(x => x.RoundId).OnDelete(DeleteBehavior.Cascade);
    }
}

internal sealed class FrozenFeedbackConfiguration : IEntityTypeConfiguration<FrozenFeedback>
{
    public void Configure(EntityTypeBuilder<FrozenFeedback> b)
    {
        // The table keeps the name it was created with.
        b.ToTable("RoundFeedback");
        b.Property(x => x.Period).HasMaxLength(FieldLengths.Period).IsRequired();
        b.HasIndex(x => new { x.RoundId, x.QuestionId, x.Period }).IsUnique();
        b.HasOne<Question>().WithMany().HasForeignKey(x => x.QuestionId).OnDelete(DeleteBehavior.Restrict);
    }
}

internal sealed class EstimateConfiguration : IEntityTypeConfiguration<Estimate>
{
    public void Configure(EntityTypeBuilder<Estimate> b)
    {
        b.Property(x => x.Period).HasMaxLength(FieldLengths.Period).IsRequired();
        b.Property(x => x.Rationale).HasMaxLength(FieldLengths.RationaleColumn);
        b.HasIndex(x => new { x.RoundId, x.QuestionId, x.Period, x.MembershipId });
        b.HasIndex(x => new { x.MembershipId, x.RoundId });
        b.HasOne<Round>().WithMany().HasForeignKey(x => x.RoundId).OnDelete(DeleteBehavior.Restrict);
        b.HasOne(x => x.Membership).WithMany().HasForeignKey(x => x.MembershipId).OnDelete(DeleteBehavior.Restrict);
        b.HasOne<Question>().WithMany().HasForeignKey(x => x.QuestionId).OnDelete(DeleteBehavior.Restrict);
    }
}

internal sealed class SubmissionKeyConfiguration : IEntityTypeConfiguration<SubmissionKey>
{
    public void Configure(EntityTypeBuilder<SubmissionKey> b)
    {
        b.Property(x => x.KeyHash).HasMaxLength(64).IsRequired();
        b.Property(x => x.RequestHash).HasMaxLength(64).IsRequired();
        b.Property(x => x.WarningsJson).IsRequired();
        b.HasIndex(x => new { x.MembershipId, x.KeyHash }).IsUnique();
        b.HasOne<PanelMembership>().WithMany().HasForeignKey(x => x.MembershipId).OnDelete(DeleteBehavior.Restrict);
    }
}

internal sealed class ConsensusConfiguration : IEntityTypeConfiguration<ConsensusEntry>
{
    public void Configure(EntityTypeBuilder<ConsensusEntry> b)
    {
        b.ToTable("Consensus");
        b.Property(x => x.Period).HasMaxLength(FieldLengths.Period).IsRequired();
        b.Property(x => x.Method).HasMaxLength(FieldLengths.ConsensusMethod).IsRequired();
        b.HasIndex(x => new { x.PanelId, x.QuestionId, x.Period }).IsUnique();
        b.HasOne<Panel>().WithMany().HasForeignKey(x => x.PanelId).OnDelete(DeleteBehavior.Cascade);
        b.HasOne<Question>().WithMany().HasForeignKey(x => x.QuestionId).OnDelete(DeleteBehavior.Restrict);
    }
}

internal sealed class QuestionRelationConfiguration : IEntityTypeConfiguration<QuestionRelation>
{
    public void Configure(EntityTypeBuilder<QuestionRelation> b)
    {
        b.HasOne<Panel>().WithMany().HasForeignKey(x => x.PanelId).OnDelete(DeleteBehavior.Cascade);
        b.HasOne<Question>().WithMany().HasForeignKey(x => x.ResultQuestionId).OnDelete(DeleteBehavior.Cascade);
        b.HasOne<Question>().WithMany().HasForeignKey(x => x.FirstQuestionId).OnDelete(DeleteBehavior.Cascade);
        b.HasOne<Question>().WithMany().HasForeignKey(x => x.SecondQuestionId).OnDelete(DeleteBehavior.Cascade);
        foreach (var label in new[] { nameof(QuestionRelation.ResultLabel), nameof(QuestionRelation.FirstLabel), nameof(QuestionRelation.SecondLabel) })
        {
            b.Property<string>(label).HasMaxLength(FieldLengths.Title).IsRequired();
        }
        foreach (var unit in new[] { nameof(QuestionRelation.ResultUnit), nameof(QuestionRelation.FirstUnit), nameof(QuestionRelation.SecondUnit) })
        {
            b.Property<string>(unit).HasMaxLength(FieldLengths.UnitLabel).IsRequired();
        }
    }
}

using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;
using PanelRound.Core.Domain;
using PanelRound.Data.Entities;

namespace PanelRound.Data.Configurations;

internal sealed class StaffUserConfiguration : IEntityTypeConfiguration<StaffUser>
{
    public void Configure(EntityTypeBuilder<StaffUser> b) => b.Property(x => x.DisplayName).HasMaxLength(FieldLengths.Name);
}

internal sealed class ApiKeyConfiguration : IEntityTypeConfiguration<ApiKey>
{
    public void Configure(EntityTypeBuilder<ApiKey> b)
    {
        b.Property(x => x.Name).HasMaxLength(FieldLengths.Name).IsRequired();
        b.Property(x => x.KeyHash).HasMaxLength(FieldLengths.Hash).IsRequired();
        b.HasIndex(x => x.KeyHash).IsUnique();
        b.Property(x => x.Prefix).HasMaxLength(16).IsRequired();
        b.Property(x => x.Role).HasMaxLength(50).IsRequired();
        b.Property(x => x.CreatedBy).HasMaxLength(FieldLengths.Actor);
    }
}

internal sealed class AuditEventConfiguration : IEntityTypeConfiguration<AuditEvent>
{
    public void Configure(EntityTypeBuilder<AuditEvent> b)
    {
        b.Property(x => x.Actor).HasMaxLength(FieldLengths.Actor).IsRequired();
        b.Property(x => x.Action).HasMaxLength(100).IsRequired();
        b.Property(x => x.EntityType).HasMaxLength(100).IsRequired();
        b.Property(x => x.EntityId).HasMaxLength(100).IsRequired();
        b.HasIndex(x => x.At);
        b.HasIndex(x => x.PanelId);
    }
}

internal sealed class JobLeaseConfiguration : IEntityTypeConfiguration<JobLease>
{
    public void Configure(EntityTypeBuilder<JobLease> b)
    {
        b.HasKey(x => x.Name);
        b.Property(x => x.Name).HasMaxLength(100);
        b.Property(x => x.Holder).HasMaxLength(200).IsRequired();
    }
}

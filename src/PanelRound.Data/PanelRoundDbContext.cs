using Microsoft.AspNetCore.DataProtection.EntityFrameworkCore;
using Microsoft.AspNetCore.Identity.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Storage.ValueConversion;
using PanelRound.Data.Entities;

namespace PanelRound.Data;

/// <summary>
/// The one database of PanelRound: the domain, the staff accounts (ASP.NET Core Identity) and
/// the data-protection keys, so that several web instances can share one PostgreSQL.
/// </summary>
/// <remarks>
/// Add a migration to both providers after a model change (the web project is the start-up project):
/// <code>
/// dotnet ef migrations add NAME --project migrations/PanelRound.Migrations.Sqlite --startup-project src/PanelRound.Web -- --Database:Provider Sqlite
/// dotnet ef migrations add NAME --project migrations/PanelRound.Migrations.Postgres --startup-project src/PanelRound.Web -- --Database:Provider Postgres --ConnectionStrings:Postgres "Host=localhost;Database=design-time"
/// </code>
/// </remarks>
public class PanelRoundDbContext(DbContextOptions<PanelRoundDbContext> options)
    : IdentityDbContext<StaffUser>(options), IDataProtectionKeyContext
{
    public DbSet<Indicator> Indicators => Set<Indicator>();

    public DbSet<Observation> Observations => Set<Observation>();

    public DbSet<Panel> Panels => Set<Panel>();

    public DbSet<Question> Questions => Set<Question>();

    public DbSet<Expert> Experts => Set<Expert>();

    public DbSet<PanelMembership> Memberships => Set<PanelMembership>();

    public DbSet<Round> Rounds => Set<Round>();

    public DbSet<FrozenFeedback> FrozenFeedback => Set<FrozenFeedback>();

    public DbSet<Estimate> Estimates => Set<Estimate>();

    public DbSet<SubmissionKey> SubmissionKeys => Set<SubmissionKey>();

    public DbSet<ConsensusEntry> Consensus => Set<ConsensusEntry>();

    public DbSet<QuestionRelation> Relations => Set<QuestionRelation>();

    public DbSet<AuditEvent> AuditEvents => Set<AuditEvent>();

    public DbSet<ApiKey> ApiKeys => Set<ApiKey>();

    public DbSet<JobLease> JobLeases => Set<JobLease>();

    public DbSet<DataProtectionKey> DataProtectionKeys => Set<DataProtectionKey>();

    protected override void OnModelCreating(ModelBuilder builder)
    {
        base.OnModelCreating(builder);
        builder.ApplyConfigurationsFromAssembly(typeof(PanelRoundDbContext).Assembly);
    }

    protected override void ConfigureConventions(ModelConfigurationBuilder configurationBuilder)
    {
        // Implementation note: every time is UTC. SQLite hands DateTime back with Kind
        // Unspecified and Npgsql refuses anything but Utc for timestamptz, so both directions
        // are pinned to Utc here rather than at each call site.
        configurationBuilder.Properties<DateTime>().HaveConversion<UtcConverter>();
        configurationBuilder.Properties<DateTime?>().HaveConversion<NullableUtcConverter>();
    }

    private sealed class UtcConverter() : ValueConverter<DateTime, DateTime>(
        v => v.Kind == DateTimeKind.Utc ? v : v.ToUniversalTime(),
        v => DateTime.SpecifyKind(v, DateTimeKind.Utc));

    private sealed class NullableUtcConverter() : ValueConverter<DateTime?, DateTime?>(
        v => v == null ? v : v.Value.Kind == DateTimeKind.Utc ? v : v.Value.ToUniversalTime(),
        v => v == null ? v : DateTime.SpecifyKind(v.Value, DateTimeKind.Utc));
}

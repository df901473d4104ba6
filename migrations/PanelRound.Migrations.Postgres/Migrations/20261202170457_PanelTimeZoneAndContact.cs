using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace PanelRound.Migrations.Postgres.Migrations
{
    /// <inheritdoc />
    public partial class PanelTimeZoneAndContact : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<string>(
                name: "ContactEmail",
                table: "Panels",
                type: "character varying(256)",
                maxLength: 256,
                nullable: true);

            migrationBuilder.AddColumn<string>(
                name: "ContactName",
                table: "Panels",
                type: "character varying(200)",
                maxLength: 200,
                nullable: true);

            migrationBuilder.AddColumn<string>(
                name: "TimeZone",
                table: "Panels",
                type: "character varying(64)",
                maxLength: 64,
                nullable: false,
                defaultValue: "UTC");
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropColumn(
                name: "ContactEmail",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "ContactName",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "TimeZone",
                table: "Panels");
        }
    }
}

using System;
using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace PanelRound.Migrations.Sqlite.Migrations
{
    /// <inheritdoc />
    public partial class MembershipRevokedAt : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<DateTime>(
                name: "RevokedAt",
                table: "Memberships",
                type: "TEXT",
                nullable: true);
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropColumn(
                name: "RevokedAt",
                table: "Memberships");
        }
    }
}
